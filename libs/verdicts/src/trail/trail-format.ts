import { csvLine, SPREADSHEET_SAFE, type CsvOptions } from '#exports';
/** One line of the decision trail: a verdict (undone ones included) with its item's settled label. */
export interface TrailRow {
  verdictId: number;
  itemId: number;
  externalId: string | null;
  reviewer: string;
  createdAt: string;
  /** The category, or null for an abstention. */
  category: string | null;
  abstain: boolean;
  undone: boolean;
  undoneAt: string | null;
  draw: string;
  modelVersion: number | null;
  shownSet: string[] | null;
  shownCall: string | null;
  elapsedMs: number | null;
  note: string | null;
  simulated: boolean;
  settledCategory: string | null;
  settledBy: string | null;
  settledAt: string | null;
  /** When the item's text, metadata and external id were erased (the verdict stays); null while it holds them. */
  itemErasedAt: string | null;
}

export const TRAIL_COLUMNS = [
  'verdict_id',
  'item_id',
  'external_id',
  'reviewer',
  'created_at',
  'category',
  'abstain',
  'undone',
  'undone_at',
  'draw',
  'model_version',
  'shown_set',
  'shown_call',
  'elapsed_ms',
  'note',
  'simulated',
  'settled_category',
  'settled_by',
  'settled_at',
  'item_erased_at',
] as const;

/** One verdict as a CSV record; text fields neutralised for spreadsheets unless `options` says raw. */
export function trailCsvLine(r: TrailRow, options: CsvOptions = SPREADSHEET_SAFE): string {
  return csvLine(
    [
      r.verdictId,
      r.itemId,
      r.externalId,
      r.reviewer,
      r.createdAt,
      r.category,
      r.abstain,
      r.undone,
      r.undoneAt,
      r.draw,
      r.modelVersion,
      r.shownSet ? JSON.stringify(r.shownSet) : null,
      r.shownCall,
      r.elapsedMs,
      r.note,
      r.simulated,
      r.settledCategory,
      r.settledBy,
      r.settledAt,
      r.itemErasedAt,
    ],
    options,
  );
}

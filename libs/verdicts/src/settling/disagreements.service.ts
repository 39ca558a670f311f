import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskDirectory, type DbInt, type DrawKind } from '#database';
import { PredictionsService } from '#models';
import { SettlementsService, type SettlementView } from './settlements.service.js';
import { NotFound } from '#errors';

/** Why an item is listed. */
export type DisagreementReason =
  | { kind: 'reviewers-differ'; categories: string[] }
  | { kind: 'against-sure-call'; verdictId: number; modelVersion: number; shownSet: string[]; category: string };

export interface Disagreement {
  /** `text` is null once the item was erased (`erasedAt`). */
  item: { id: number; externalId: string | null; text: string | null; erasedAt: Date | null };
  verdicts: Array<{
    id: number;
    reviewer: string;
    category: string | null;
    abstain: boolean;
    draw: DrawKind;
    createdAt: Date;
    undoneAt: Date | null;
    modelVersion: number | null;
    shownCall: string | null;
  }>;
  reasons: DisagreementReason[];
  /** The latest settlement, or null while unsettled. */
  settled: SettlementView | null;
  /** Every settlement, oldest first. */
  settlements: SettlementView[];
}

interface VerdictRow {
  id: DbInt;
  item_id: DbInt;
  reviewer: string;
  category: string | null;
  abstain: unknown;
  draw: DrawKind;
  created_at: unknown;
  undone_at: unknown;
  model_version: DbInt | null;
  shown_set: string | null;
  shown_call: string | null;
  external_id: string | null;
  text: string;
  erased_at: unknown;
}

const CANDIDATE_BATCH = 500;

/**
 * Items for the supervisor to settle: two or more live verdicts on different
 * categories, or a live verdict against a `sure` call of a model version
 * whose realized coverage is healthy (its random checks do not fall short of
 * the target: the upper end of their Wilson interval is not below it, the
 * rule of the coverage alert applied to that version). A sure call of a
 * version that is known to miss is no evidence against the reviewer.
 */
@Injectable()
export class DisagreementsService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(SettlementsService) private readonly settlements: SettlementsService,
  ) {}

  /** One page, by item id ascending, starting after `after`; `next` is the cursor of the following page (null at the end). */
  async list(
    deskId: number,
    opts: { after?: number; limit: number },
  ): Promise<{ disagreements: Disagreement[]; next: number | null }> {
    const entry = await this.directory.get(deskId);
    if (!entry) throw new NotFound(`no desk ${deskId}`);
    const coverage = await this.predictions.coverage(entry.desk);
    const unhealthy = new Set(
      coverage.byVersion
        .filter((v) => v.interval !== null && v.interval.upper < entry.desk.coverageTarget)
        .map((v) => v.modelVersion),
    );
    const found: Array<{ rows: VerdictRow[]; reasons: DisagreementReason[] }> = [];
    let after = opts.after ?? 0;
    let exhausted = false;
    while (found.length < opts.limit && !exhausted) {
      // A sure set holds one category, stored as its JSON array: a verdict with the same text as that array agrees with
      // the call. Names that JSON escapes never compare equal here and are left to the exact check below.
      const ids = await this.db.query<{ item_id: DbInt }>(
        null,
        `SELECT v.item_id FROM verdicts v JOIN categories c ON c.id = v.category_id
         WHERE v.desk_id = $1 AND v.undone_at IS NULL AND v.item_id > $2
         GROUP BY v.item_id
         HAVING COUNT(DISTINCT v.category_id) >= 2 OR MAX(CASE WHEN v.shown_call = 'sure' AND v.shown_set <> ('["' || c.name || '"]') THEN 1 ELSE 0 END) = 1
         ORDER BY v.item_id LIMIT ${CANDIDATE_BATCH}`,
        [deskId, after],
      );
      exhausted = ids.length < CANDIDATE_BATCH;
      if (ids.length === 0) break;
      const list = ids.map((r) => Number(r.item_id));
      const rows = await this.db.query<VerdictRow>(
        null,
        `SELECT v.id, v.item_id, u.name AS reviewer, c.name AS category, v.abstain, v.draw, v.created_at, v.undone_at, v.model_version, v.shown_set, v.shown_call, i.external_id, i.text, i.erased_at
         FROM verdicts v JOIN users u ON u.id = v.reviewer_id LEFT JOIN categories c ON c.id = v.category_id JOIN items i ON i.id = v.item_id
         WHERE v.item_id IN (${list.map((_, i) => `$${i + 1}`).join(', ')}) ORDER BY v.item_id, v.id`,
        list,
      );
      const byItem = new Map<number, VerdictRow[]>();
      for (const r of rows) byItem.set(Number(r.item_id), [...(byItem.get(Number(r.item_id)) ?? []), r]);
      for (const id of list) {
        after = id;
        const itemRows = byItem.get(id) ?? [];
        const reasons = reasonsFor(itemRows, unhealthy);
        if (reasons.length > 0) found.push({ rows: itemRows, reasons });
        if (found.length === opts.limit) break;
      }
    }
    const settled = await this.settlements.forItems(found.map((f) => Number(f.rows[0].item_id)));
    return {
      disagreements: found.map(({ rows, reasons }) => {
        const first = rows[0];
        const history = settled.get(Number(first.item_id)) ?? [];
        return {
          item: {
            id: Number(first.item_id),
            externalId: first.external_id,
            // A tombstone shows when it was erased, never its placeholder.
            text: first.erased_at === null ? first.text : null,
            erasedAt: this.db.parseTime(first.erased_at),
          },
          verdicts: rows.map((r) => ({
            id: Number(r.id),
            reviewer: r.reviewer,
            category: r.category,
            abstain: r.abstain === true || r.abstain === 1,
            draw: r.draw,
            createdAt: this.db.parseTime(r.created_at)!,
            undoneAt: this.db.parseTime(r.undone_at),
            modelVersion: r.model_version === null ? null : Number(r.model_version),
            shownCall: r.shown_call,
          })),
          reasons,
          settled: history[history.length - 1] ?? null,
          settlements: history,
        };
      }),
      next: found.length === opts.limit ? after : null,
    };
  }
}

/** The reasons an item's live verdicts make it a disagreement (none: it is not one). */
function reasonsFor(rows: VerdictRow[], unhealthyVersions: Set<number>): DisagreementReason[] {
  const live = rows.filter((r) => r.undone_at === null && r.category !== null);
  const reasons: DisagreementReason[] = [];
  const categories = [...new Set(live.map((r) => r.category!))].sort();
  if (categories.length >= 2) reasons.push({ kind: 'reviewers-differ', categories });
  for (const r of live) {
    if (
      r.shown_call !== 'sure' ||
      r.model_version === null ||
      r.shown_set === null ||
      unhealthyVersions.has(Number(r.model_version))
    )
      continue;
    const shownSet = JSON.parse(r.shown_set) as string[];
    if (!shownSet.includes(r.category!))
      reasons.push({
        kind: 'against-sure-call',
        verdictId: Number(r.id),
        modelVersion: Number(r.model_version),
        shownSet,
        category: r.category!,
      });
  }
  return reasons;
}

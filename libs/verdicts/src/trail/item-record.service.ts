import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService, type AuditActor } from '#audit';
import { Database, DeskEntity, type DbInt, type ErasedBy, type TriageCall, type VerdictDrawKind } from '#database';
import { HighlightService, type Highlight } from '#leases';
import { ModelStore, PredictionsService } from '#models';
import { NotFound } from '#errors';

/** One verdict on the item as the item page shows it: who, what, under which version, and why it was served. */
export interface ItemVerdict {
  id: number;
  reviewer: string;
  category: string | null;
  abstain: boolean;
  draw: VerdictDrawKind;
  modelVersion: number | null;
  shownSet: string[] | null;
  shownCall: TriageCall | null;
  elapsedMs: number | null;
  note: string | null;
  simulated: boolean;
  createdAt: Date;
  undoneAt: Date | null;
}

/** A version's call on the item: its stored probabilities, read at the desk's coverage target and mode now. */
export interface ItemCall {
  modelVersion: number;
  current: boolean;
  /** True when the version never scored the item (decided before it, or imported since) and the call is computed now. */
  computed: boolean;
  probabilities: Record<string, number>;
  set: string[];
  call: TriageCall;
}

/** Everything the decision trail knows about one item, its text left out (reading it is a separate, audited step). */
export interface ItemRecord {
  id: number;
  deskId: number;
  externalId: string | null;
  source: string | null;
  postedAt: Date | null;
  importedAt: Date;
  state: string;
  erasedAt: Date | null;
  erasedBy: ErasedBy | null;
  verdicts: ItemVerdict[];
  settlements: Array<{ id: number; category: string; reason: string; settledBy: string; createdAt: Date }>;
  calls: ItemCall[];
}

/** The text of an item, read on request; `text` is null once the item is erased. */
export interface ItemText {
  itemId: number;
  text: string | null;
  highlights: Highlight[];
  erasedAt: Date | null;
}

interface ItemRow {
  id: DbInt;
  desk_id: DbInt;
  external_id: string | null;
  source: string | null;
  text: string;
  posted_at: unknown;
  imported_at: unknown;
  state: string;
  erased_at: unknown;
  erased_by: ErasedBy | null;
}

/**
 * One item for oversight: its verdicts with their draws, the settlements, and each stored version's call on it. The
 * text is not part of the record: `readText` hands it out and writes an `item.read` line to the audit trail in the
 * same transaction, so every reading of a text on the trail screens is on record.
 */
@Injectable()
export class ItemRecordService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(ModelStore) private readonly models: ModelStore,
    @Inject(HighlightService) private readonly highlighter: HighlightService,
  ) {}

  async record(itemId: number): Promise<ItemRecord> {
    const item = await this.item(itemId);
    const deskId = Number(item.desk_id);
    const verdicts = await this.db.query<{
      id: DbInt;
      reviewer: string;
      category: string | null;
      abstain: boolean | number;
      draw: VerdictDrawKind;
      model_version: DbInt | null;
      shown_set: string | null;
      shown_call: TriageCall | null;
      elapsed_ms: DbInt | null;
      note: string | null;
      simulated: boolean | number;
      created_at: unknown;
      undone_at: unknown;
    }>(
      null,
      `SELECT v.id, u.name AS reviewer, c.name AS category, v.abstain, v.draw, v.model_version, v.shown_set, v.shown_call,
              v.elapsed_ms, v.note, v.simulated, v.created_at, v.undone_at
       FROM verdicts v JOIN users u ON u.id = v.reviewer_id LEFT JOIN categories c ON c.id = v.category_id
       WHERE v.item_id = $1 ORDER BY v.id`,
      [itemId],
    );
    const settlements = await this.db.query<{
      id: DbInt;
      category: string;
      reason: string;
      settled_by: string;
      created_at: unknown;
    }>(
      null,
      `SELECT s.id, c.name AS category, s.reason, u.name AS settled_by, s.created_at
       FROM settlements s JOIN categories c ON c.id = s.category_id JOIN users u ON u.id = s.settled_by
       WHERE s.item_id = $1 ORDER BY s.id`,
      [itemId],
    );
    return {
      id: Number(item.id),
      deskId,
      externalId: item.external_id,
      source: item.source,
      postedAt: this.db.parseTime(item.posted_at),
      importedAt: this.db.parseTime(item.imported_at)!,
      state: item.state,
      erasedAt: this.db.parseTime(item.erased_at),
      erasedBy: item.erased_by,
      verdicts: verdicts.map((v) => ({
        id: Number(v.id),
        reviewer: v.reviewer,
        category: v.category,
        abstain: v.abstain === true || v.abstain === 1,
        draw: v.draw,
        modelVersion: v.model_version === null ? null : Number(v.model_version),
        shownSet: v.shown_set === null ? null : (JSON.parse(v.shown_set) as string[]),
        shownCall: v.shown_call,
        elapsedMs: v.elapsed_ms === null ? null : Number(v.elapsed_ms),
        note: v.note,
        simulated: v.simulated === true || v.simulated === 1,
        createdAt: this.db.parseTime(v.created_at)!,
        undoneAt: this.db.parseTime(v.undone_at),
      })),
      settlements: settlements.map((s) => ({
        id: Number(s.id),
        category: s.category,
        reason: s.reason,
        settledBy: s.settled_by,
        createdAt: this.db.parseTime(s.created_at)!,
      })),
      calls: await this.calls(deskId, item),
    };
  }

  /** The item's text for one reader, recorded as `item.read` in the audit trail; nothing is recorded for an erased item. */
  async readText(actor: AuditActor, itemId: number): Promise<ItemText> {
    return this.db.write(async (m) => {
      const item = await this.item(itemId, m);
      const erasedAt = this.db.parseTime(item.erased_at);
      if (erasedAt) return { itemId, text: null, highlights: [], erasedAt };
      const deskId = Number(item.desk_id);
      const desk = await m.findOneByOrFail(DeskEntity, { id: deskId });
      await this.audit.record(m, actor, { action: 'item.read', entityType: 'item', entityId: itemId, deskId });
      return { itemId, text: item.text, highlights: this.highlighter.highlights(desk, item.text), erasedAt: null };
    });
  }

  private async item(itemId: number, m: EntityManager | null = null): Promise<ItemRow> {
    const row = await this.db.queryOne<ItemRow>(
      m,
      `SELECT id, desk_id, external_id, source, text, posted_at, imported_at, state, erased_at, erased_by FROM items WHERE id = $1`,
      [itemId],
    );
    if (!row) throw new NotFound(`no item ${itemId}`);
    return row;
  }

  /**
   * Each version that still holds stored probabilities for the item, read at the desk's target and mode now, and the
   * current version's call computed from the text when that version did not score the item (a decided item is not
   * scored again), as the queue does for a second opinion.
   */
  private async calls(deskId: number, item: ItemRow): Promise<ItemCall[]> {
    const desk = await this.db.manager.findOneByOrFail(DeskEntity, { id: deskId });
    const rows = await this.db.query<{ model_version: DbInt; probabilities: string }>(
      null,
      'SELECT model_version, probabilities FROM predictions WHERE item_id = $1 ORDER BY model_version',
      [item.id],
    );
    const calls: ItemCall[] = [];
    for (const r of rows) {
      const version = Number(r.model_version);
      const model = await this.models.load(deskId, version);
      if (!model) continue;
      const shown = this.predictions.show(desk, model, JSON.parse(r.probabilities) as number[]);
      calls.push({ ...shown, current: version === desk.currentModelVersion, computed: false });
    }
    if (
      desk.currentModelVersion !== null &&
      !calls.some((c) => c.current) &&
      this.db.parseTime(item.erased_at) === null
    ) {
      const shown = await this.predictions.forItem(null, desk, Number(item.id), item.text);
      if (shown) calls.push({ ...shown, current: true, computed: true });
    }
    return calls;
  }
}

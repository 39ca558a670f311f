import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import {
  CategoryEntity,
  Database,
  DeskEntity,
  inListChunks,
  TOMBSTONE_TEXT,
  type DbBool,
  type DbInt,
  type ErasedBy,
  type ErasureAsked,
  type ErasureOutcome,
} from '#database';

/** Values per `IN` list: keeps every statement well under both databases' parameter limits. */
const CHUNK = 500;

/** The columns an erasure request matches items by (plain, or the keyed hash kept on a tombstone). */
export type SubjectColumn = 'id' | 'external_id' | 'source' | 'external_id_hash' | 'source_hash';

/** An item about to be erased: what the tombstone and the document frequencies need. */
export interface ErasableItem {
  id: number;
  text: string;
  externalId: string | null;
  source: string | null;
}

/** A stored erasure, with the name of the user who asked for it (null for the retention period). */
export interface StoredErasure {
  id: number;
  erasedBy: ErasedBy;
  reason: string | null;
  requestedBy: string | null;
  createdAt: Date;
  asked: ErasureAsked;
  outcome: ErasureOutcome;
}

/** An item as the subject export shows it (text and metadata still as stored: the service hides a tombstone's). */
export interface SubjectItemRow {
  id: number;
  externalId: string | null;
  source: string | null;
  text: string;
  meta: Record<string, unknown>;
  postedAt: Date | null;
  importedAt: Date;
  state: string;
  erasedAt: Date | null;
  erasedBy: ErasedBy | null;
}

export interface SubjectVerdict {
  id: number;
  itemId: number;
  reviewer: string;
  category: string | null;
  abstain: boolean;
  draw: string;
  note: string | null;
  modelVersion: number | null;
  shownSet: string[] | null;
  createdAt: Date;
  undoneAt: Date | null;
}

export interface SubjectSettlement {
  id: number;
  itemId: number;
  category: string;
  reason: string;
  settledBy: string;
  createdAt: Date;
}

export interface StoredPrediction {
  itemId: number;
  modelVersion: number;
  probabilities: number[];
}

/**
 * All SQL of erasure, retention and the subject export: the items they find and tombstone, the erasures record, the
 * labels and last decisions that retention periods count from. Methods taking `m` run in the caller's write
 * transaction; those taking `m | null` read in it or outside one.
 */
@Injectable()
export class RetentionRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** Every desk's id, in order. */
  async deskIds(): Promise<number[]> {
    return (await this.db.manager.find(DeskEntity, { order: { id: 'ASC' }, select: { id: true } })).map((d) => d.id);
  }

  /** The desk as stored now (its retention settings must be the current ones) with its categories in desk order. */
  async desk(deskId: number): Promise<{ desk: DeskEntity; categories: CategoryEntity[] } | null> {
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    if (!desk) return null;
    const categories = await this.db.manager.find(CategoryEntity, { where: { deskId }, order: { position: 'ASC' } });
    return { desk, categories };
  }

  /** Ids of the desk's items imported before `before` and not erased, decided ones or the others, in order. */
  async importedBefore(deskId: number, before: Date, decided: boolean): Promise<number[]> {
    const rows = await this.db.query<{ id: DbInt }>(
      null,
      `SELECT id FROM items WHERE desk_id = $1 AND imported_at < $2 AND erased_at IS NULL
         AND ${decided ? `state = 'decided'` : `state <> 'decided'`} ORDER BY id`,
      [deskId, this.db.time(before)],
    );
    return rows.map((r) => Number(r.id));
  }

  /** Locks these items (in id order, so two runs cannot deadlock) for the rest of the transaction. */
  async lockItems(m: EntityManager, ids: readonly number[]): Promise<void> {
    for (const part of inListChunks(ids, CHUNK))
      await this.db.query(
        m,
        `SELECT id FROM items WHERE id IN (${this.db.inList(part.length)}) ORDER BY id${this.db.lockRows()}`,
        part,
      );
  }

  /** State and import time of those of these items that belong to the desk and are not erased. */
  async liveItems(
    m: EntityManager | null,
    deskId: number,
    ids: readonly number[],
  ): Promise<Array<{ id: number; state: string; importedAt: Date }>> {
    const out: Array<{ id: number; state: string; importedAt: Date }> = [];
    for (const part of inListChunks(ids, CHUNK)) {
      const rows = await this.db.query<{ id: DbInt; state: string; imported_at: unknown }>(
        m,
        `SELECT id, state, imported_at FROM items
         WHERE desk_id = $1 AND erased_at IS NULL AND id IN (${this.db.inList(part.length, 2)})`,
        [deskId, ...part],
      );
      for (const r of rows)
        out.push({ id: Number(r.id), state: r.state, importedAt: this.db.parseTime(r.imported_at)! });
    }
    return out;
  }

  /** Each item's last decision: its latest live verdict or settlement (items with neither are absent). */
  async lastDecisions(m: EntityManager | null, ids: readonly number[]): Promise<Map<number, number>> {
    const last = new Map<number, number>();
    for (const part of inListChunks(ids, CHUNK)) {
      const list = this.db.inList(part.length);
      for (const [table, extra] of [
        ['verdicts', ' AND undone_at IS NULL'],
        ['settlements', ''],
      ] as const) {
        const rows = await this.db.query<{ item_id: DbInt; at: unknown }>(
          m,
          `SELECT item_id, MAX(created_at) AS at FROM ${table} WHERE item_id IN (${list})${extra} GROUP BY item_id`,
          part,
        );
        for (const row of rows) {
          const t = this.db.parseTime(row.at)!.getTime();
          last.set(Number(row.item_id), Math.max(last.get(Number(row.item_id)) ?? 0, t));
        }
      }
    }
    return last;
  }

  /**
   * Each item's label as training reads it: the latest settlement, else the latest live verdict of its original draw
   * that names a category (never a second opinion). Items without one are absent.
   */
  async labels(m: EntityManager | null, itemIds: readonly number[]): Promise<Map<number, string>> {
    const out = new Map<number, string>();
    for (const part of inListChunks(itemIds, CHUNK)) {
      const list = this.db.inList(part.length);
      const verdicts = await this.db.query<{ item_id: DbInt; category: string }>(
        m,
        `SELECT v.item_id, c.name AS category FROM verdicts v JOIN categories c ON c.id = v.category_id
         WHERE v.item_id IN (${list}) AND v.undone_at IS NULL AND v.draw <> 'second-opinion' ORDER BY v.id`,
        part,
      );
      for (const v of verdicts) out.set(Number(v.item_id), v.category);
      const settled = await this.db.query<{ item_id: DbInt; category: string }>(
        m,
        `SELECT s.item_id, c.name AS category FROM settlements s JOIN categories c ON c.id = s.category_id
         WHERE s.item_id IN (${list}) AND s.id = (SELECT MAX(s2.id) FROM settlements s2 WHERE s2.item_id = s.item_id)`,
        part,
      );
      for (const s of settled) out.set(Number(s.item_id), s.category);
    }
    return out;
  }

  /** Which of these ids are items of the desk. */
  async itemsOfDesk(m: EntityManager, deskId: number, ids: readonly number[]): Promise<Set<number>> {
    const here = new Set<number>();
    for (const part of inListChunks(ids, CHUNK)) {
      const rows = await this.db.query<{ id: DbInt }>(
        m,
        `SELECT id FROM items WHERE desk_id = $1 AND id IN (${this.db.inList(part.length, 2)})`,
        [deskId, ...part],
      );
      for (const r of rows) here.add(Number(r.id));
    }
    return here;
  }

  /** The desk's items whose `column` holds one of `values`, with whether each is erased already. */
  async itemsMatching(
    m: EntityManager,
    deskId: number,
    column: SubjectColumn,
    values: readonly unknown[],
  ): Promise<Array<{ id: number; erased: boolean }>> {
    const out: Array<{ id: number; erased: boolean }> = [];
    for (const part of inListChunks(values, CHUNK)) {
      const rows = await this.db.query<{ id: DbInt; erased_at: unknown }>(
        m,
        `SELECT id, erased_at FROM items WHERE desk_id = $1 AND ${column} IN (${this.db.inList(part.length, 2)})`,
        [deskId, ...part],
      );
      for (const r of rows) out.push({ id: Number(r.id), erased: r.erased_at !== null });
    }
    return out;
  }

  /**
   * The desk's items among these ids that still hold their text, in id order (at most {@link CHUNK} ids a call),
   * locked for the transaction on PostgreSQL: a lease skips them (SKIP LOCKED); one that took an item first commits
   * before.
   */
  async lockErasable(m: EntityManager, deskId: number, ids: readonly number[]): Promise<ErasableItem[]> {
    if (ids.length === 0) return [];
    const rows = await this.db.query<{ id: DbInt; text: string; external_id: string | null; source: string | null }>(
      m,
      `SELECT id, text, external_id, source FROM items
       WHERE desk_id = $1 AND erased_at IS NULL AND id IN (${this.db.inList(ids.length, 2)}) ORDER BY id${this.db.lockRows()}`,
      [deskId, ...ids],
    );
    return rows.map((r) => ({ id: Number(r.id), text: r.text, externalId: r.external_id, source: r.source }));
  }

  /** Drops the second opinions on these items that are due or held (done ones stay with their verdicts). */
  async dropPendingSecondOpinions(m: EntityManager, ids: readonly number[]): Promise<void> {
    for (const part of inListChunks(ids, CHUNK))
      await this.db.query(
        m,
        `DELETE FROM second_opinions WHERE state <> 'done' AND item_id IN (${this.db.inList(part.length)})`,
        part,
      );
  }

  /** Drops the desk's word statistics (they counted texts that are going). */
  async dropTermStatistics(m: EntityManager, deskId: number): Promise<void> {
    await this.db.query(m, 'DELETE FROM term_statistics WHERE desk_id = $1', [deskId]);
  }

  /**
   * Turns an item into its tombstone: text, metadata, external id and source go (the last two kept as keyed hashes),
   * and it leaves the queue for good (`decided`, no lease).
   */
  async tombstone(
    m: EntityManager,
    t: { id: number; externalIdHash: string | null; sourceHash: string | null; at: Date; by: ErasedBy },
  ): Promise<void> {
    await this.db.query(
      m,
      `UPDATE items SET text = $1, normalized_text = '', normalized_hash = $2, meta = '{}', external_id = NULL, source = NULL,
         external_id_hash = $3, source_hash = $4, erased_at = $5, erased_by = $6, state = 'decided', lease_id = NULL, leased_until = NULL
       WHERE id = $7`,
      [TOMBSTONE_TEXT, `erased:${t.id}`, t.externalIdHash, t.sourceHash, this.db.time(t.at), t.by, t.id],
    );
  }

  /** Stores one erasure; its id. */
  async insertErasure(
    m: EntityManager,
    e: {
      deskId: number;
      by: ErasedBy;
      reason: string | null;
      requestedBy: number | null;
      at: Date;
      asked: ErasureAsked;
      outcome: ErasureOutcome;
    },
  ): Promise<number> {
    const [row] = await this.db.query<{ id: DbInt }>(
      m,
      `INSERT INTO erasures (desk_id, erased_by, reason, requested_by, created_at, asked, counts)
       VALUES ($1, $2, $3, $4, $5, $6, $7) RETURNING id`,
      [e.deskId, e.by, e.reason, e.requestedBy, this.db.time(e.at), JSON.stringify(e.asked), JSON.stringify(e.outcome)],
    );
    return Number(row.id);
  }

  /** The desk's erasures, newest first. */
  async erasures(deskId: number): Promise<StoredErasure[]> {
    const rows = await this.db.query<{
      id: DbInt;
      erased_by: ErasedBy;
      reason: string | null;
      requested_by: string | null;
      created_at: unknown;
      asked: string;
      counts: string;
    }>(
      null,
      `SELECT e.id, e.erased_by, e.reason, u.name AS requested_by, e.created_at, e.asked, e.counts
       FROM erasures e LEFT JOIN users u ON u.id = e.requested_by WHERE e.desk_id = $1 ORDER BY e.id DESC`,
      [deskId],
    );
    return rows.map((r) => ({
      id: Number(r.id),
      erasedBy: r.erased_by,
      reason: r.reason,
      requestedBy: r.requested_by,
      createdAt: this.db.parseTime(r.created_at)!,
      asked: JSON.parse(r.asked) as ErasureAsked,
      outcome: JSON.parse(r.counts) as ErasureOutcome,
    }));
  }

  /** The desk's salt, made (`candidate`) at its first erasure; two first erasures at once agree on one. */
  async salt(m: EntityManager, deskId: number, candidate: string): Promise<string> {
    await this.db.query(m, 'UPDATE desks SET erasure_salt = $1 WHERE id = $2 AND erasure_salt IS NULL', [
      candidate,
      deskId,
    ]);
    const row = await this.db.queryOne<{ erasure_salt: string }>(m, 'SELECT erasure_salt FROM desks WHERE id = $1', [
      deskId,
    ]);
    return row!.erasure_salt;
  }

  /** The desk's items whose external id (or source) is `value`, or whose tombstone kept `hash` of it; by id. */
  async subjectItems(
    deskId: number,
    by: 'external_id' | 'source',
    value: string,
    hash: string,
  ): Promise<SubjectItemRow[]> {
    const rows = await this.db.query<{
      id: DbInt;
      external_id: string | null;
      source: string | null;
      text: string;
      meta: string;
      posted_at: unknown;
      imported_at: unknown;
      state: string;
      erased_at: unknown;
      erased_by: ErasedBy | null;
    }>(
      null,
      `SELECT id, external_id, source, text, meta, posted_at, imported_at, state, erased_at, erased_by FROM items
       WHERE desk_id = $1 AND (${by} = $2 OR ${by}_hash = $3) ORDER BY id`,
      [deskId, value, hash],
    );
    return rows.map((r) => ({
      id: Number(r.id),
      externalId: r.external_id,
      source: r.source,
      text: r.text,
      meta: JSON.parse(r.meta) as Record<string, unknown>,
      postedAt: this.db.parseTime(r.posted_at),
      importedAt: this.db.parseTime(r.imported_at)!,
      state: r.state,
      erasedAt: this.db.parseTime(r.erased_at),
      erasedBy: r.erased_by,
    }));
  }

  /** Every verdict on these items (undone ones too), by id. */
  async verdictsOn(ids: readonly number[]): Promise<SubjectVerdict[]> {
    const out: SubjectVerdict[] = [];
    for (const part of inListChunks(ids, CHUNK)) {
      const rows = await this.db.query<{
        id: DbInt;
        item_id: DbInt;
        reviewer: string;
        category: string | null;
        abstain: DbBool;
        draw: string;
        note: string | null;
        model_version: DbInt | null;
        shown_set: string | null;
        created_at: unknown;
        undone_at: unknown;
      }>(
        null,
        `SELECT v.id, v.item_id, u.name AS reviewer, c.name AS category, v.abstain, v.draw, v.note, v.model_version,
                v.shown_set, v.created_at, v.undone_at
         FROM verdicts v JOIN users u ON u.id = v.reviewer_id LEFT JOIN categories c ON c.id = v.category_id
         WHERE v.item_id IN (${this.db.inList(part.length)}) ORDER BY v.id`,
        part,
      );
      for (const v of rows)
        out.push({
          id: Number(v.id),
          itemId: Number(v.item_id),
          reviewer: v.reviewer,
          category: v.category,
          abstain: this.db.bool(v.abstain),
          draw: v.draw,
          note: v.note,
          modelVersion: v.model_version === null ? null : Number(v.model_version),
          shownSet: v.shown_set === null ? null : (JSON.parse(v.shown_set) as string[]),
          createdAt: this.db.parseTime(v.created_at)!,
          undoneAt: this.db.parseTime(v.undone_at),
        });
    }
    return out;
  }

  /** Every settlement of these items, by id. */
  async settlementsOf(ids: readonly number[]): Promise<SubjectSettlement[]> {
    const out: SubjectSettlement[] = [];
    for (const part of inListChunks(ids, CHUNK)) {
      const rows = await this.db.query<{
        id: DbInt;
        item_id: DbInt;
        category: string;
        reason: string;
        settled_by: string;
        created_at: unknown;
      }>(
        null,
        `SELECT s.id, s.item_id, c.name AS category, s.reason, u.name AS settled_by, s.created_at
         FROM settlements s JOIN categories c ON c.id = s.category_id JOIN users u ON u.id = s.settled_by
         WHERE s.item_id IN (${this.db.inList(part.length)}) ORDER BY s.id`,
        part,
      );
      for (const s of rows)
        out.push({
          id: Number(s.id),
          itemId: Number(s.item_id),
          category: s.category,
          reason: s.reason,
          settledBy: s.settled_by,
          createdAt: this.db.parseTime(s.created_at)!,
        });
    }
    return out;
  }

  /** The stored predictions of these items, by item and version. */
  async predictionsOf(ids: readonly number[]): Promise<StoredPrediction[]> {
    const out: StoredPrediction[] = [];
    for (const part of inListChunks(ids, CHUNK)) {
      const rows = await this.db.query<{ item_id: DbInt; model_version: DbInt; probabilities: string }>(
        null,
        `SELECT item_id, model_version, probabilities FROM predictions
         WHERE item_id IN (${this.db.inList(part.length)}) ORDER BY item_id, model_version`,
        part,
      );
      for (const p of rows)
        out.push({
          itemId: Number(p.item_id),
          modelVersion: Number(p.model_version),
          probabilities: JSON.parse(p.probabilities) as number[],
        });
    }
    return out;
  }
}

import { BadRequestException, Inject, Injectable, NotFoundException } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService, type AuditActor } from '#audit';
import {
  Database,
  DeskDirectory,
  TOMBSTONE_TEXT,
  type DbInt,
  type ErasedBy,
  type ErasureAsked,
  type ErasureOutcome,
} from '#database';
import { DeskFeaturesService } from '#models';
import { newErasureSalt, subjectHash } from './subject-hash.js';

/** Items erased per transaction by {@link ErasureService.eraseInBatches}: each batch commits with its own record. */
export const ERASURE_BATCH = 500;
/** Rows per statement inside one erasure: keeps `IN` lists well under both databases' parameter limits. */
const CHUNK = 500;

/** What erasing some items did: how many, and how many of each label (items with no label count as `unlabelled`). */
export interface ErasureCounts {
  erased: number;
  byCategory: Record<string, number>;
  unlabelled: number;
}

/** An erasure as the API shows it. */
export interface ErasureView extends ErasureOutcome {
  id: number;
  deskId: number;
  erasedBy: ErasedBy;
  reason: string | null;
  requestedBy: string | null;
  createdAt: Date;
  asked: ErasureAsked;
}

/** The selectors of an erasure request. */
export interface ErasureRequest {
  externalIds?: string[];
  sources?: string[];
  itemIds?: number[];
  reason: string;
}

interface ErasableRow {
  id: DbInt;
  text: string;
  external_id: string | null;
  source: string | null;
}

const placeholders = (n: number, from = 1) => Array.from({ length: n }, (_, i) => `$${i + from}`).join(', ');
const chunks = <T>(xs: readonly T[], size = CHUNK): T[][] =>
  Array.from({ length: Math.ceil(xs.length / size) }, (_, i) => xs.slice(i * size, i * size + size));

/**
 * Erases items: their text, metadata, external id, source and term counts go, the row stays as a tombstone (id, the
 * external id and source hashed with the desk's salt, dates, `erased_at`, `erased_by`). Verdicts, settlements, leases,
 * predictions (numbers) and the audit trail stay. An item that was waiting in the queue leaves it for good (it is
 * marked `decided`, with no lease), and a second opinion that was due or held on it is dropped, so no reviewer is
 * served its text again; the desk's document frequencies lose exactly what its import added. The one owner of this
 * transition of `items`. Each erasure is recorded in `erasures` and the audit trail with counts only.
 */
@Injectable()
export class ErasureService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
  ) {}

  /**
   * A supervisor's request: erases, in one transaction, every item of the desk with one of the external ids or
   * sources, or one of the item ids (each must belong to the desk: 400 otherwise, and nothing is erased).
   */
  async request(actor: AuditActor, deskId: number, req: ErasureRequest): Promise<ErasureView> {
    if (!(await this.directory.get(deskId))) throw new NotFoundException(`no desk ${deskId}`);
    const externalIds = [...new Set(req.externalIds ?? [])];
    const sources = [...new Set(req.sources ?? [])];
    const itemIds = [...new Set(req.itemIds ?? [])];
    if (externalIds.length + sources.length + itemIds.length === 0)
      throw new BadRequestException('give at least one of: externalIds, sources, itemIds (non-empty lists)');
    const asked: ErasureAsked = {
      externalIds: externalIds.length,
      sources: sources.length,
      itemIds: itemIds.length,
    };
    const view = await this.db.write(async (m) => {
      if (itemIds.length) {
        const found = await this.db.query<{ id: DbInt }>(
          m,
          `SELECT id FROM items WHERE desk_id = $1 AND id IN (${placeholders(itemIds.length, 2)})`,
          [deskId, ...itemIds],
        );
        const here = new Set(found.map((r) => Number(r.id)));
        const missing = itemIds.filter((id) => !here.has(id));
        if (missing.length)
          throw new BadRequestException(
            `itemIds: ${missing.length} are not items of desk ${deskId} (${missing.slice(0, 20).join(', ')}${missing.length > 20 ? ', …' : ''}); nothing was erased`,
          );
      }
      const salt = await this.salt(m, deskId);
      const hashes = (xs: string[]) => xs.map((x) => subjectHash(salt, x)!);
      const match = async (column: string, values: readonly unknown[]) => {
        const out: Array<{ id: DbInt; erased_at: unknown }> = [];
        for (const part of chunks(values))
          out.push(
            ...(await this.db.query<{ id: DbInt; erased_at: unknown }>(
              m,
              `SELECT id, erased_at FROM items WHERE desk_id = $1 AND ${column} IN (${placeholders(part.length, 2)})`,
              [deskId, ...part],
            )),
          );
        return out;
      };
      const matched = [
        ...(await match('external_id', externalIds)),
        ...(await match('source', sources)),
        ...(await match('id', itemIds)),
        ...(await match('external_id_hash', hashes(externalIds))),
        ...(await match('source_hash', hashes(sources))),
      ];
      const live = new Set<number>();
      const gone = new Set<number>();
      for (const r of matched) (r.erased_at === null ? live : gone).add(Number(r.id));
      const now = new Date();
      const counts = await this.eraseIn(m, deskId, [...live], { by: 'request', now });
      return this.record(m, actor, deskId, {
        by: 'request',
        reason: req.reason,
        asked,
        outcome: { ...counts, alreadyErased: gone.size },
        now,
      });
    });
    if (view.erased > 0) await this.db.releaseErased();
    return view;
  }

  /** The desk's erasures, newest first. */
  async list(deskId: number): Promise<ErasureView[]> {
    if (!(await this.directory.get(deskId))) throw new NotFoundException(`no desk ${deskId}`);
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
      deskId,
      erasedBy: r.erased_by,
      reason: r.reason,
      requestedBy: r.requested_by,
      createdAt: this.db.parseTime(r.created_at)!,
      asked: JSON.parse(r.asked) as ErasureAsked,
      ...(JSON.parse(r.counts) as ErasureOutcome),
    }));
  }

  /**
   * Erases these items of a desk in batches of {@link ERASURE_BATCH}, each one transaction recorded as one erasure
   * (for the retention period, whose runs may be large: a batch holds the items' locks only while it runs).
   */
  async eraseInBatches(
    actor: AuditActor,
    deskId: number,
    itemIds: readonly number[],
    opts: { by: ErasedBy; reason?: string; now?: Date },
  ): Promise<ErasureCounts> {
    const total: ErasureCounts = { erased: 0, byCategory: {}, unlabelled: 0 };
    const ids = [...new Set(itemIds)].sort((a, b) => a - b);
    for (const batch of chunks(ids, ERASURE_BATCH)) {
      const counts = await this.db.write(async (m) => {
        const now = opts.now ?? new Date();
        const c = await this.eraseIn(m, deskId, batch, { by: opts.by, now });
        if (c.erased > 0)
          await this.record(m, actor, deskId, {
            by: opts.by,
            reason: opts.reason ?? null,
            asked: { externalIds: 0, sources: 0, itemIds: batch.length },
            outcome: { ...c, alreadyErased: 0 },
            now,
          });
        return c;
      });
      if (counts.erased > 0) await this.db.releaseErased();
      total.erased += counts.erased;
      total.unlabelled += counts.unlabelled;
      for (const [k, n] of Object.entries(counts.byCategory)) total.byCategory[k] = (total.byCategory[k] ?? 0) + n;
    }
    return total;
  }

  /**
   * Erases these items of a desk inside the caller's write transaction (ids of other desks, and items already erased,
   * are left alone). Records nothing: the caller records the erasure.
   */
  async eraseIn(
    m: EntityManager,
    deskId: number,
    itemIds: readonly number[],
    opts: { by: ErasedBy; now: Date },
  ): Promise<ErasureCounts> {
    const counts: ErasureCounts = { erased: 0, byCategory: {}, unlabelled: 0 };
    const sorted = [...new Set(itemIds)].sort((a, b) => a - b);
    if (sorted.length === 0) return counts;
    const salt = await this.salt(m, deskId);
    for (const part of chunks(sorted)) {
      // Locks the rows on PostgreSQL: a lease skips them (SKIP LOCKED); one that took an item first commits before.
      const rows = await this.db.query<ErasableRow>(
        m,
        `SELECT id, text, external_id, source FROM items WHERE desk_id = $1 AND erased_at IS NULL AND id IN (${placeholders(part.length, 2)}) ORDER BY id${this.db.pg ? ' FOR UPDATE' : ''}`,
        [deskId, ...part],
      );
      if (rows.length === 0) continue;
      const ids = rows.map((r) => Number(r.id));
      const labels = await this.labels(m, ids);
      await this.features.removeItems(
        m,
        deskId,
        rows.map((r) => ({ id: Number(r.id), text: r.text })),
      );
      await this.db.query(
        m,
        `DELETE FROM second_opinions WHERE state <> 'done' AND item_id IN (${placeholders(ids.length)})`,
        ids,
      );
      // The desk's word statistics counted these texts (their words, and items as examples): they go until the
      // next count, which reads only texts that remain.
      await this.db.query(m, 'DELETE FROM term_statistics WHERE desk_id = $1', [deskId]);
      for (const r of rows) {
        await this.db.query(
          m,
          `UPDATE items SET text = $1, normalized_text = '', normalized_hash = $2, meta = '{}', external_id = NULL, source = NULL,
             external_id_hash = $3, source_hash = $4, erased_at = $5, erased_by = $6, state = 'decided', lease_id = NULL, leased_until = NULL
           WHERE id = $7`,
          [
            TOMBSTONE_TEXT,
            `erased:${r.id}`,
            subjectHash(salt, r.external_id),
            subjectHash(salt, r.source),
            this.db.time(opts.now),
            opts.by,
            r.id,
          ],
        );
      }
      counts.erased += rows.length;
      for (const id of ids) {
        const label = labels.get(id);
        if (label === undefined) counts.unlabelled++;
        else counts.byCategory[label] = (counts.byCategory[label] ?? 0) + 1;
      }
    }
    return counts;
  }

  /** Stores one erasure and its audit line (counts and reason, never a text, an external id or a source). */
  async record(
    m: EntityManager,
    actor: AuditActor,
    deskId: number,
    e: { by: ErasedBy; reason: string | null; asked: ErasureAsked; outcome: ErasureOutcome; now: Date },
  ): Promise<ErasureView> {
    const [row] = await this.db.query<{ id: DbInt }>(
      m,
      'INSERT INTO erasures (desk_id, erased_by, reason, requested_by, created_at, asked, counts) VALUES ($1, $2, $3, $4, $5, $6, $7) RETURNING id',
      [
        deskId,
        e.by,
        e.reason,
        e.by === 'request' ? actor.id : null,
        this.db.time(e.now),
        JSON.stringify(e.asked),
        JSON.stringify(e.outcome),
      ],
    );
    const id = Number(row.id);
    await this.audit.record(m, actor, {
      action: 'erasure.create',
      entityType: 'erasure',
      entityId: id,
      deskId,
      after: { erasedBy: e.by, reason: e.reason, asked: e.asked, ...e.outcome },
    });
    return {
      id,
      deskId,
      erasedBy: e.by,
      reason: e.reason,
      requestedBy: e.by === 'request' ? actor.name : null,
      createdAt: e.now,
      asked: e.asked,
      ...e.outcome,
    };
  }

  /**
   * Each item's label as training reads it: the latest settlement, else the latest live verdict of its original draw
   * that names a category (never a second opinion). Items without one are absent.
   */
  async labels(m: EntityManager | null, itemIds: readonly number[]): Promise<Map<number, string>> {
    const out = new Map<number, string>();
    if (itemIds.length === 0) return out;
    const list = placeholders(itemIds.length);
    const verdicts = await this.db.query<{ item_id: DbInt; category: string }>(
      m,
      `SELECT v.item_id, c.name AS category FROM verdicts v JOIN categories c ON c.id = v.category_id
       WHERE v.item_id IN (${list}) AND v.undone_at IS NULL AND v.draw <> 'second-opinion' ORDER BY v.id`,
      [...itemIds],
    );
    for (const v of verdicts) out.set(Number(v.item_id), v.category);
    const settled = await this.db.query<{ item_id: DbInt; category: string }>(
      m,
      `SELECT s.item_id, c.name AS category FROM settlements s JOIN categories c ON c.id = s.category_id
       WHERE s.item_id IN (${list}) AND s.id = (SELECT MAX(s2.id) FROM settlements s2 WHERE s2.item_id = s.item_id)`,
      [...itemIds],
    );
    for (const s of settled) out.set(Number(s.item_id), s.category);
    return out;
  }

  /** The desk's salt, made at its first erasure; two first erasures at once agree on one. */
  async salt(m: EntityManager, deskId: number): Promise<string> {
    await this.db.query(m, 'UPDATE desks SET erasure_salt = $1 WHERE id = $2 AND erasure_salt IS NULL', [
      newErasureSalt(),
      deskId,
    ]);
    const row = await this.db.queryOne<{ erasure_salt: string }>(m, 'SELECT erasure_salt FROM desks WHERE id = $1', [
      deskId,
    ]);
    return row!.erasure_salt;
  }
}

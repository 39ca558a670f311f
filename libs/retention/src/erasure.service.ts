import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService, type AuditActor } from '#audit';
import {
  Database,
  DeskDirectory,
  inListChunks,
  type ErasedBy,
  type ErasureAsked,
  type ErasureOutcome,
} from '#database';
import { deskOr404 } from '#database';
import { DeskFeaturesService } from '#models';
import { RetentionRepository, type SubjectColumn } from './retention.repository.js';
import { newErasureSalt, subjectHash } from './subject-hash.js';
import { InvalidInput } from '#errors';

/** Items erased per transaction by {@link ErasureService.eraseInBatches}: each batch commits with its own record. */
export const ERASURE_BATCH = 500;
/** Items locked and tombstoned per step inside one erasure. */
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
    @Inject(RetentionRepository) private readonly repository: RetentionRepository,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
  ) {}

  /**
   * A supervisor's request: erases, in one transaction, every item of the desk with one of the external ids or
   * sources, or one of the item ids (each must belong to the desk: 400 otherwise, and nothing is erased).
   */
  async request(actor: AuditActor, deskId: number, req: ErasureRequest): Promise<ErasureView> {
    deskOr404(deskId, await this.directory.get(deskId));
    const externalIds = [...new Set(req.externalIds ?? [])];
    const sources = [...new Set(req.sources ?? [])];
    const itemIds = [...new Set(req.itemIds ?? [])];
    if (externalIds.length + sources.length + itemIds.length === 0)
      throw new InvalidInput('give at least one of: externalIds, sources, itemIds (non-empty lists)');
    const asked: ErasureAsked = {
      externalIds: externalIds.length,
      sources: sources.length,
      itemIds: itemIds.length,
    };
    const view = await this.db.write(async (m) => {
      if (itemIds.length) {
        const here = await this.repository.itemsOfDesk(m, deskId, itemIds);
        const missing = itemIds.filter((id) => !here.has(id));
        if (missing.length)
          throw new InvalidInput(
            `itemIds: ${missing.length} are not items of desk ${deskId} (${missing.slice(0, 20).join(', ')}${missing.length > 20 ? ', …' : ''}); nothing was erased`,
          );
      }
      const salt = await this.salt(m, deskId);
      const hashes = (xs: string[]) => xs.map((x) => subjectHash(salt, x)!);
      const match = (column: SubjectColumn, values: readonly unknown[]) =>
        this.repository.itemsMatching(m, deskId, column, values);
      const matched = [
        ...(await match('external_id', externalIds)),
        ...(await match('source', sources)),
        ...(await match('id', itemIds)),
        ...(await match('external_id_hash', hashes(externalIds))),
        ...(await match('source_hash', hashes(sources))),
      ];
      const live = new Set<number>();
      const gone = new Set<number>();
      for (const r of matched) (r.erased ? gone : live).add(r.id);
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
    deskOr404(deskId, await this.directory.get(deskId));
    return (await this.repository.erasures(deskId)).map(({ id, outcome, ...e }) => ({ id, deskId, ...e, ...outcome }));
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
    for (const batch of inListChunks(ids, ERASURE_BATCH)) {
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
    for (const part of inListChunks(sorted, CHUNK)) {
      const rows = await this.repository.lockErasable(m, deskId, part);
      if (rows.length === 0) continue;
      const ids = rows.map((r) => r.id);
      const labels = await this.labels(m, ids);
      await this.features.removeItems(
        m,
        deskId,
        rows.map((r) => ({ id: r.id, text: r.text })),
      );
      await this.repository.dropPendingSecondOpinions(m, ids);
      // The desk's word statistics counted these texts (their words, and items as examples): they go until the
      // next count, which reads only texts that remain.
      await this.repository.dropTermStatistics(m, deskId);
      for (const r of rows)
        await this.repository.tombstone(m, {
          id: r.id,
          externalIdHash: subjectHash(salt, r.externalId),
          sourceHash: subjectHash(salt, r.source),
          at: opts.now,
          by: opts.by,
        });
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
    const id = await this.repository.insertErasure(m, {
      deskId,
      by: e.by,
      reason: e.reason,
      requestedBy: e.by === 'request' ? actor.id : null,
      at: e.now,
      asked: e.asked,
      outcome: e.outcome,
    });
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
  labels(m: EntityManager | null, itemIds: readonly number[]): Promise<Map<number, string>> {
    return this.repository.labels(m, itemIds);
  }

  /** The desk's salt, made at its first erasure; two first erasures at once agree on one. */
  salt(m: EntityManager, deskId: number): Promise<string> {
    return this.repository.salt(m, deskId, newErasureSalt());
  }
}

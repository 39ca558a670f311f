import { randomUUID } from 'node:crypto';
import { ForbiddenException, Inject, Injectable, NotFoundException } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService } from '#audit';
import type { Principal } from '#auth';
import { Database, DeskEntity, LeaseEntity, type DrawKind, type ShownPrediction } from '#database';
import { HighlightService, type Highlight } from './highlight.service.js';

export interface LeaseGrant {
  lease: { id: string; expiresAt: Date };
  item: { id: number; text: string; meta: Record<string, unknown>; externalId: string | null; source: string | null; postedAt: Date | null };
  highlights: Highlight[];
  prediction: ShownPrediction | null;
}

/** Source of uniform numbers in [0, 1); injectable so tests can fix the draws. */
export const LEASE_RANDOM = Symbol('LEASE_RANDOM');
export type UniformSource = () => number;

interface PickedRow {
  id: number;
  text: string;
  meta: string;
  external_id: string | null;
  source: string | null;
  posted_at: unknown;
  seed_hits: number;
}

const PICK_COLUMNS = 'id, text, meta, external_id, source, posted_at, seed_hits';

/**
 * Hands items to reviewers. No item is leased to two reviewers at once:
 * on PostgreSQL the pick takes a row lock that skips rows other transactions
 * hold (`FOR UPDATE SKIP LOCKED`); on SQLite the whole pick runs in one
 * serialised write transaction.
 */
@Injectable()
export class LeasesService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(HighlightService) private readonly highlighter: HighlightService,
    @Inject(LEASE_RANDOM) private readonly random: UniformSource,
  ) {}

  /** Leases the next item of a desk to a reviewer; null when nothing is left to serve. */
  async lease(reviewer: Principal, deskId: number): Promise<LeaseGrant | null> {
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    if (!desk) throw new NotFoundException(`no desk ${deskId}`);
    const wantRandom = this.random() < desk.randomShare;
    const r = this.random();
    const grant = await this.db.write(async (m) => {
      const now = new Date();
      let draw: DrawKind = wantRandom ? 'random' : desk.currentModelVersion === null ? 'seed' : 'uncertainty';
      let row: PickedRow | null = null;
      if (draw !== 'random') {
        // An item whose lease expired goes out again first, under the draw it was first served by.
        const reclaimed = await this.pickExpired(m, deskId, now);
        if (reclaimed) return this.grant(m, desk, reviewer, reclaimed.row, reclaimed.draw, now);
        row = await this.pickByPriority(m, deskId, now);
        // Before a model exists, priority is the seed-term count; once no open
        // item matches a seed term, a uniform draw is the honest choice, and it
        // is recorded as one.
        if (row && draw === 'seed' && Number(row.seed_hits) === 0) row = null;
        if (!row && draw === 'seed') draw = 'random';
      }
      if (draw === 'random') row = await this.pickUniform(m, deskId, r);
      if (!row) return null;
      return this.grant(m, desk, reviewer, row, draw, now);
    });
    if (!grant) return null;
    const { lease, row } = grant;
    void r;
    return {
      lease: { id: lease.id, expiresAt: lease.expiresAt },
      item: { id: row.id, text: row.text, meta: JSON.parse(row.meta) as Record<string, unknown>, externalId: row.external_id, source: row.source, postedAt: this.db.parseTime(row.posted_at) },
      highlights: this.highlighter.highlights(desk, row.text),
      prediction: lease.prediction,
    };
  }

  private async grant(m: EntityManager, desk: DeskEntity, reviewer: Principal, row: PickedRow, draw: DrawKind, now: Date): Promise<{ lease: LeaseEntity; row: PickedRow }> {
    const lease: LeaseEntity = {
      id: randomUUID(), deskId: desk.id, itemId: row.id, reviewerId: reviewer.id, draw, prediction: null,
      createdAt: now, expiresAt: new Date(now.getTime() + desk.leaseSeconds * 1000), closedAt: null, closedReason: null,
    };
    await this.db.query(m, `UPDATE items SET state = 'leased', lease_id = $1, leased_until = $2 WHERE id = $3`, [lease.id, this.db.time(lease.expiresAt), row.id]);
    await m.insert(LeaseEntity, lease as never);
    return { lease, row };
  }

  /** The item whose lease expired longest ago, with the draw kind of that lease. */
  private async pickExpired(m: EntityManager, deskId: number, now: Date): Promise<{ row: PickedRow; draw: DrawKind } | null> {
    const lock = this.db.pg ? ' FOR UPDATE SKIP LOCKED' : '';
    const rows = await this.db.query<PickedRow & { lease_id: string }>(m,
      `SELECT ${PICK_COLUMNS}, lease_id FROM items WHERE desk_id = $1 AND state = 'leased' AND leased_until < $2 ORDER BY leased_until LIMIT 1${lock}`,
      [deskId, this.db.time(now)],
    );
    const row = rows[0];
    if (!row) return null;
    const [prev] = await this.db.query<{ draw: DrawKind }>(m, 'SELECT draw FROM leases WHERE id = $1', [row.lease_id]);
    return { row, draw: prev?.draw ?? 'random' };
  }

  /** The highest-priority open item. Leased items have their own state, so the index scan never wades through them. */
  private async pickByPriority(m: EntityManager, deskId: number, _now: Date): Promise<PickedRow | null> {
    const lock = this.db.pg ? ' FOR UPDATE SKIP LOCKED' : '';
    const rows = await this.db.query<PickedRow>(m, `SELECT ${PICK_COLUMNS} FROM items WHERE desk_id = $1 AND state = 'open' ORDER BY priority DESC, id DESC LIMIT 1${lock}`, [deskId]);
    return rows[0] ?? null;
  }

  /**
   * A uniform draw from the open items nobody holds: the first item whose
   * random key is at or after r, wrapping around. Keys are assigned at import
   * independently of content, so the drawn text is distributed as the pool
   * is — which is what calibration needs (exchangeability).
   */
  private async pickUniform(m: EntityManager, deskId: number, r: number): Promise<PickedRow | null> {
    const lock = this.db.pg ? ' FOR UPDATE SKIP LOCKED' : '';
    const base = `SELECT ${PICK_COLUMNS} FROM items WHERE desk_id = $1 AND state = 'open'`;
    const after = await this.db.query<PickedRow>(m, `${base} AND rand_key >= $2 ORDER BY rand_key LIMIT 1${lock}`, [deskId, r]);
    if (after[0]) return after[0];
    const before = await this.db.query<PickedRow>(m, `${base} AND rand_key < $2 ORDER BY rand_key LIMIT 1${lock}`, [deskId, r]);
    return before[0] ?? null;
  }

  /** Hands a leased item back to the queue. */
  async giveBack(reviewer: Principal, leaseId: string): Promise<void> {
    await this.db.write(async (m) => {
      const lease = await m.findOneBy(LeaseEntity, { id: leaseId });
      if (!lease) throw new NotFoundException(`no lease ${leaseId}`);
      if (lease.reviewerId !== reviewer.id) throw new ForbiddenException('this lease belongs to another reviewer');
      if (lease.closedAt) return;
      const now = new Date();
      await m.update(LeaseEntity, { id: leaseId }, { closedAt: now, closedReason: 'returned' });
      await this.db.query(m, `UPDATE items SET state = 'open', lease_id = NULL, leased_until = NULL WHERE id = $1 AND lease_id = $2`, [lease.itemId, leaseId]);
      await this.audit.record(m, reviewer, { action: 'lease.return', entityType: 'lease', entityId: leaseId, deskId: lease.deskId, after: { itemId: lease.itemId } });
    });
  }

  /** The reviewer's open, unexpired leases on a desk (to resume after a reload). */
  async mine(reviewer: Principal, deskId: number): Promise<Array<{ id: string; itemId: number; expiresAt: Date }>> {
    const p = (n: number) => this.db.p(n);
    const rows: Array<{ id: string; item_id: number; expires_at: unknown }> = await this.db.query(null, 
      `SELECT l.id, l.item_id, l.expires_at FROM leases l JOIN items i ON i.id = l.item_id AND i.lease_id = l.id
       WHERE l.desk_id = ${p(1)} AND l.reviewer_id = ${p(2)} AND l.closed_at IS NULL AND l.expires_at > ${p(3)} ORDER BY l.created_at`,
      [deskId, reviewer.id, this.db.time(new Date())],
    );
    return rows.map((r) => ({ id: r.id, itemId: r.item_id, expiresAt: this.db.parseTime(r.expires_at)! }));
  }
}

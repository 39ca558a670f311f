import { randomUUID } from 'node:crypto';
import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService } from '#audit';
import type { Principal } from '#auth';
import { APP_CONFIG, type AppConfig } from '#config';
import {
  Database,
  dbErrorCode,
  DeskDirectory,
  type DbInt,
  LeaseEntity,
  type DeskEntity,
  type DrawKind,
  type ShownPrediction,
} from '#database';
import { avoidNearDuplicate, drawKindOf, drawPlan, NEAR_DUPLICATE_CANDIDATES, type DrawSource } from '#learning';
import { PredictionsService, ScreenLaneService } from '#models';
import { HighlightService, type Highlight } from './highlight.service.js';
import { NotAllowed, NotFound } from '#errors';

export interface LeaseGrant {
  lease: { id: string; expiresAt: Date };
  item: {
    id: number;
    text: string;
    meta: Record<string, unknown>;
    externalId: string | null;
    source: string | null;
    postedAt: Date | null;
  };
  highlights: Highlight[];
  prediction: ShownPrediction | null;
}

/** Source of uniform numbers in [0, 1); injectable so tests can fix the draws. */
export const LEASE_RANDOM = Symbol('LEASE_RANDOM');
export type UniformSource = () => number;

interface PickedRow {
  id: DbInt;
  text: string;
  meta: string;
  external_id: string | null;
  source: string | null;
  posted_at: unknown;
  seed_hits: DbInt;
}

/** How often, and how long each time, a lease waits for a pool held by another transaction (PostgreSQL). */
const POOL_LOCK_RETRIES = 2;
const POOL_LOCK_WAIT_MS = 15_000;

const PICK_COLUMNS = 'id, text, meta, external_id, source, posted_at, seed_hits';
/** Items of the review lane's order looked up at a time. */
const SCREEN_PAGE = 100;

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
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(ScreenLaneService) private readonly lane: ScreenLaneService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /** Leases the next item of a desk to a reviewer; null when nothing is left to serve. */
  async lease(reviewer: Principal, deskId: number, attempt = 0): Promise<LeaseGrant | null> {
    const entry = await this.directory.get(deskId);
    if (!entry) throw new NotFound(`no desk ${deskId}`);
    const { desk } = entry;
    // The sampling policy (see the learning core's sampling-policy): one uniform number chooses the kind of
    // draw, and each kind's sources are tried in order until one has an item.
    const u = this.random();
    const r = this.random();
    const kind = drawKindOf(u, desk, {
      hasModel: desk.currentModelVersion !== null,
      laneOpen: desk.currentModelVersion !== null && desk.watch.length > 0,
    });
    const screenOrder = kind === 'screen' ? await this.lane.order(desk) : null;
    const hasSeeds = Object.values(desk.seedTerms).some((t) => t.length > 0);
    const plan = drawPlan(kind, hasSeeds);
    const leaseId = randomUUID();
    const now = new Date();
    const expiresAt = new Date(now.getTime() + desk.leaseSeconds * 1000);
    const picked = await this.db.write(async (m) => {
      const skipped = await this.skippedBy(m, reviewer, deskId, now);
      const notSkipped = skipped.length ? ` AND id NOT IN (${skipped.join(', ')})` : '';
      const claim = (where: string, order: string, params: unknown[]) =>
        this.claim(m, leaseId, expiresAt, deskId, where + notSkipped, order, params);
      let draw: DrawKind = kind;
      // An item whose lease expired goes out again first, under the draw it was first served by;
      // the uniform draws below stay uniform over the open items.
      let row = await claim(`state = 'leased' AND leased_until < $4`, 'leased_until', [this.db.time(now)]);
      if (row) {
        const prev = await this.db.queryOne<{ draw: DrawKind }>(
          m,
          'SELECT draw FROM leases WHERE item_id = $1 ORDER BY created_at DESC LIMIT 1',
          [row.id],
        );
        draw = prev?.draw ?? 'random';
      } else if ((row = await this.claimSecondOpinion(m, reviewer, desk, leaseId, expiresAt, now))) {
        draw = 'second-opinion';
      } else {
        for (const step of plan) {
          row = await this.fromSource(m, step.source, reviewer, desk, leaseId, expiresAt, screenOrder, r, claim, {
            skipped,
            notSkipped,
          });
          if (row) {
            draw = step.records;
            break;
          }
        }
      }
      if (!row) return null;
      const prediction = await this.record(m, reviewer, desk, leaseId, now, expiresAt, row, draw);
      return { row, prediction };
    });
    if (!picked) {
      if (this.db.pg && attempt < POOL_LOCK_RETRIES && (await this.waitForHeldPool(deskId)))
        return this.lease(reviewer, deskId, attempt + 1);
      return null;
    }
    return this.grant(desk, leaseId, expiresAt, picked.row, picked.prediction);
  }

  /**
   * Leases one given item to a reviewer, inside the caller's transaction:
   * an open item, or for a `second-opinion` draw an item whose second
   * opinion is due. The lease records `draw`, so a correction of a verdict on
   * a random draw is still a random draw (it still calibrates). Null when the
   * item is no longer free (someone else took it, or it is decided).
   */
  async grantItem(
    m: EntityManager,
    reviewer: Principal,
    desk: DeskEntity,
    itemId: number,
    draw: DrawKind,
  ): Promise<LeaseGrant | null> {
    const leaseId = randomUUID();
    const now = new Date();
    const expiresAt = new Date(now.getTime() + desk.leaseSeconds * 1000);
    let row: PickedRow | null | undefined;
    if (draw === 'second-opinion') {
      const due = await this.db.queryOne<{ item_id: DbInt }>(
        m,
        `UPDATE second_opinions SET state = 'leased', lease_id = $1, leased_until = $2 WHERE item_id = $3 AND desk_id = $4 AND state = 'due' RETURNING item_id`,
        [leaseId, this.db.time(expiresAt), itemId, desk.id],
      );
      row = due
        ? await this.db.queryOne<PickedRow>(m, `SELECT ${PICK_COLUMNS} FROM items WHERE id = $1`, [itemId])
        : null;
    } else {
      row = await this.db.queryOne<PickedRow>(
        m,
        `UPDATE items SET state = 'leased', lease_id = $1, leased_until = $2 WHERE id = $3 AND desk_id = $4 AND state = 'open' RETURNING ${PICK_COLUMNS}`,
        [leaseId, this.db.time(expiresAt), itemId, desk.id],
      );
    }
    if (!row) return null;
    const prediction = await this.record(m, reviewer, desk, leaseId, now, expiresAt, row, draw);
    return this.grant(desk, leaseId, expiresAt, row, prediction);
  }

  /** Writes the lease row with what the reviewer is shown (recorded with the lease, and later with the verdict). */
  private async record(
    m: EntityManager,
    reviewer: Principal,
    desk: DeskEntity,
    leaseId: string,
    now: Date,
    expiresAt: Date,
    row: PickedRow,
    draw: DrawKind,
  ): Promise<ShownPrediction | null> {
    const prediction = await this.predictions.forItem(m, desk, Number(row.id), row.text);
    await this.db.query(
      m,
      'INSERT INTO leases (id, desk_id, item_id, reviewer_id, draw, prediction, created_at, expires_at, closed_at, closed_reason) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, NULL, NULL)',
      [
        leaseId,
        desk.id,
        row.id,
        reviewer.id,
        draw,
        prediction ? JSON.stringify(prediction) : null,
        this.db.time(now),
        this.db.time(expiresAt),
      ],
    );
    return prediction;
  }

  private grant(
    desk: DeskEntity,
    leaseId: string,
    expiresAt: Date,
    row: PickedRow,
    prediction: ShownPrediction | null,
  ): LeaseGrant {
    return {
      lease: { id: leaseId, expiresAt },
      item: {
        id: Number(row.id),
        text: row.text,
        meta: JSON.parse(row.meta) as Record<string, unknown>,
        externalId: row.external_id,
        source: row.source,
        postedAt: this.db.parseTime(row.posted_at),
      },
      highlights: this.highlighter.highlights(desk, row.text),
      prediction,
    };
  }

  /**
   * PostgreSQL: when every pick came back empty, the open items may all be
   * held by another transaction (publishing a new version rewrites every open
   * item's priority in one), which `SKIP LOCKED` skips. Rather than tell the
   * reviewer that nothing is left, wait for that transaction to end (bounded
   * by a lock timeout) and say whether an open item is there to pick again.
   */
  private async waitForHeldPool(deskId: number): Promise<boolean> {
    try {
      return await this.db.write(async (m) => {
        await this.db.query(m, `SET LOCAL lock_timeout = '${POOL_LOCK_WAIT_MS}ms'`, []);
        const rows = await this.db.query<{ id: number }>(
          m,
          `SELECT id FROM items WHERE desk_id = $1 AND state = 'open' LIMIT 1 FOR UPDATE`,
          [deskId],
        );
        return rows.length > 0;
      });
    } catch (e) {
      // 55P03 lock_not_available: the pool stayed held past the timeout; answer "nothing now" as before.
      if (dbErrorCode(e) === '55P03') return false;
      throw e;
    }
  }

  /**
   * Takes the first item of a desk matching `where` in `order` and marks it
   * leased, in one statement. On PostgreSQL the inner select locks the row
   * and skips rows other transactions hold (`FOR UPDATE SKIP LOCKED`), so
   * concurrent reviewers never get the same item; on SQLite the surrounding
   * write transaction is already serialised. Extra parameters start at `$4`.
   */
  private async claim(
    m: EntityManager,
    leaseId: string,
    expiresAt: Date,
    deskId: number,
    where: string,
    order: string,
    params: unknown[],
  ): Promise<PickedRow | null> {
    const lock = this.db.lockRows({ skipLocked: true });
    const rows = await this.db.query<PickedRow>(
      m,
      `UPDATE items SET state = 'leased', lease_id = $1, leased_until = $2
       WHERE id = (SELECT id FROM items WHERE desk_id = $3 AND ${where} ORDER BY ${order} LIMIT 1${lock})
       RETURNING ${PICK_COLUMNS}`,
      [leaseId, this.db.time(expiresAt), deskId, ...params],
    );
    return rows[0] ?? null;
  }

  /**
   * One source of the sampling policy's plan, read with SQL: the review lane,
   * the most uncertain items (the policy skips a near-duplicate), the cold
   * start's seed-term matches (most matches first), or a uniform draw (the
   * first open item whose random key is at or after r, wrapping around; keys
   * are assigned at import independently of content, so the drawn text is
   * distributed as the pool is, which is what calibration needs).
   */
  private async fromSource(
    m: EntityManager,
    source: DrawSource,
    reviewer: Principal,
    desk: DeskEntity,
    leaseId: string,
    expiresAt: Date,
    screenOrder: number[] | null,
    r: number,
    claim: (where: string, order: string, params: unknown[]) => Promise<PickedRow | null>,
    skips: { skipped: number[]; notSkipped: string },
  ): Promise<PickedRow | null> {
    switch (source) {
      case 'screen':
        return screenOrder ? this.claimScreen(m, desk, leaseId, expiresAt, screenOrder, skips.skipped) : null;
      case 'uncertainty':
        return this.claimUncertain(m, reviewer, desk, leaseId, expiresAt, skips.notSkipped);
      case 'seed':
        return claim(`state = 'open' AND seed_hits > 0`, 'priority DESC, id DESC', []);
      case 'uniform':
        return (
          (await claim(`state = 'open' AND rand_key >= $4`, 'rand_key', [r])) ??
          (await claim(`state = 'open' AND rand_key < $4`, 'rand_key', [r]))
        );
    }
  }

  /**
   * The oldest item due for a second opinion that this reviewer has never
   * been served nor decided, leased like an open item is: on PostgreSQL the
   * inner select skips rows other transactions hold (`FOR UPDATE SKIP
   * LOCKED`), on SQLite the write transaction is serialised. A lease that
   * expired without a verdict makes the item available again (to anyone but
   * the reviewers who held it). The item stays `decided`: it never re-enters
   * the open pool of first draws. Nothing about the earlier verdict is read,
   * except whether the demo's simulated reviewer gave it: such items go to
   * people only when the desk asks for it (`serveSimulatedSecondOpinions`),
   * so a person's queue is not filled with checks of the simulator's work.
   */
  private async claimSecondOpinion(
    m: EntityManager,
    reviewer: Principal,
    desk: DeskEntity,
    leaseId: string,
    expiresAt: Date,
    now: Date,
  ): Promise<PickedRow | null> {
    const lock = this.db.lockRows({ of: 'so', skipLocked: true });
    const due = await this.db.queryOne<{ item_id: DbInt }>(
      m,
      `UPDATE second_opinions SET state = 'leased', lease_id = $1, leased_until = $2
       WHERE item_id = (
         SELECT so.item_id FROM second_opinions so
         WHERE so.desk_id = $3 AND (so.state = 'due' OR (so.state = 'leased' AND so.leased_until < $4))
           AND NOT EXISTS (SELECT 1 FROM leases l WHERE l.item_id = so.item_id AND l.reviewer_id = $5)
           AND NOT EXISTS (SELECT 1 FROM verdicts v WHERE v.item_id = so.item_id AND v.reviewer_id = $5)${
             desk.serveSimulatedSecondOpinions
               ? ''
               : `
           AND NOT EXISTS (SELECT 1 FROM verdicts sv WHERE sv.item_id = so.item_id AND sv.simulated AND sv.undone_at IS NULL)`
           }
         ORDER BY so.created_at, so.item_id LIMIT 1${lock})
       RETURNING item_id`,
      [leaseId, this.db.time(expiresAt), desk.id, this.db.time(now), reviewer.id],
    );
    if (!due) return null;
    const row = await this.db.queryOne<PickedRow>(m, `SELECT ${PICK_COLUMNS} FROM items WHERE id = $1`, [due.item_id]);
    return row ?? null;
  }

  /**
   * The most uncertain open item, skipping near-duplicates (cosine ≥ 0.95
   * of tf-idf vectors under the current model) of the item this reviewer was
   * served last: among the top few candidates, the first that is not one.
   */
  private async claimUncertain(
    m: EntityManager,
    reviewer: Principal,
    desk: DeskEntity,
    leaseId: string,
    expiresAt: Date,
    notSkipped: string,
  ): Promise<PickedRow | null> {
    const lock = this.db.lockRows({ skipLocked: true });
    const candidates = await this.db.query<{ id: number; text: string }>(
      m,
      `SELECT id, text FROM items WHERE desk_id = $1 AND state = 'open'${notSkipped} ORDER BY priority DESC, id DESC LIMIT ${NEAR_DUPLICATE_CANDIDATES}${lock}`,
      [desk.id],
    );
    if (candidates.length === 0) return null;
    let chosen = candidates[0];
    const model = candidates.length > 1 ? await this.predictions.current(desk) : null;
    if (model) {
      const last = await this.db.queryOne<{ text: string; erased_at: unknown }>(
        m,
        'SELECT i.text, i.erased_at FROM leases l JOIN items i ON i.id = l.item_id WHERE l.desk_id = $1 AND l.reviewer_id = $2 ORDER BY l.created_at DESC LIMIT 1',
        [desk.id, reviewer.id],
      );
      // An erased item's text is gone: there is no near-duplicate of it to avoid.
      if (last && last.erased_at === null)
        chosen = avoidNearDuplicate(candidates, (c) => model.vectorize(c.text), model.vectorize(last.text)) ?? chosen;
    }
    const rows = await this.db.query<PickedRow>(
      m,
      `UPDATE items SET state = 'leased', lease_id = $1, leased_until = $2 WHERE id = $3 RETURNING ${PICK_COLUMNS}`,
      [leaseId, this.db.time(expiresAt), chosen.id],
    );
    return rows[0] ?? null;
  }

  /**
   * The first item of the review lane (flagged items, highest probability of
   * a watched category first) that is still open, read in pages of the
   * lane's order: on PostgreSQL, rows other transactions hold are skipped
   * (`FOR UPDATE SKIP LOCKED`); on SQLite the write transaction is
   * serialised. Items found decided are dropped from the kept order.
   */
  private async claimScreen(
    m: EntityManager,
    desk: DeskEntity,
    leaseId: string,
    expiresAt: Date,
    fullOrder: number[],
    skipped: number[],
  ): Promise<PickedRow | null> {
    const lock = this.db.lockRows({ skipLocked: true });
    const decided = new Set<number>();
    const skip = new Set(skipped);
    const order = skip.size ? fullOrder.filter((id) => !skip.has(id)) : fullOrder;
    let chosen: number | undefined;
    for (let from = 0; from < order.length && chosen === undefined; from += SCREEN_PAGE) {
      const page = order.slice(from, from + SCREEN_PAGE);
      const list = page.map((_, i) => `$${i + 2}`).join(', ');
      const states = await this.db.query<{ id: DbInt; state: string }>(
        m,
        `SELECT id, state FROM items WHERE desk_id = $1 AND id IN (${list})`,
        [desk.id, ...page],
      );
      for (const s of states) if (s.state === 'decided') decided.add(Number(s.id));
      const open = states.filter((s) => s.state === 'open').map((s) => Number(s.id));
      if (open.length === 0) continue;
      const free = await this.db.query<{ id: DbInt }>(
        m,
        `SELECT id FROM items WHERE desk_id = $1 AND state = 'open' AND id IN (${open.map((_, i) => `$${i + 2}`).join(', ')})${lock}`,
        [desk.id, ...open],
      );
      const freeIds = new Set(free.map((f) => Number(f.id)));
      chosen = page.find((id) => freeIds.has(id));
    }
    this.lane.forget(desk, decided);
    if (chosen === undefined) return null;
    const row = await this.db.queryOne<PickedRow>(
      m,
      `UPDATE items SET state = 'leased', lease_id = $1, leased_until = $2 WHERE id = $3 RETURNING ${PICK_COLUMNS}`,
      [leaseId, this.db.time(expiresAt), chosen],
    );
    return row ?? null;
  }

  /**
   * The items this reviewer skipped on the desk whose skip has not run out,
   * read inside the lease's transaction (integers from the database, so they
   * can stand in the SQL as literals).
   */
  private async skippedBy(m: EntityManager, reviewer: Principal, deskId: number, now: Date): Promise<number[]> {
    const rows = await this.db.query<{ item_id: DbInt }>(
      m,
      'SELECT item_id FROM lease_skips WHERE reviewer_id = $1 AND desk_id = $2 AND expires_at > $3',
      [reviewer.id, deskId, this.db.time(now)],
    );
    return rows.map((r) => Number(r.item_id)).filter((id) => Number.isSafeInteger(id));
  }

  /**
   * Hands a leased item back to the queue. With `skip`, the item is also
   * kept from this reviewer (not from others) for one sign-in session's
   * length (SESSION_HOURS): written in the same transaction as the return,
   * so no lease can see the item open and not yet skipped.
   */
  async giveBack(reviewer: Principal, leaseId: string, options: { skip?: boolean } = {}): Promise<void> {
    await this.db.write(async (m) => {
      const lease = await m.findOneBy(LeaseEntity, { id: leaseId });
      if (!lease) throw new NotFound(`no lease ${leaseId}`);
      if (lease.reviewerId !== reviewer.id) throw new NotAllowed('this lease belongs to another reviewer');
      const now = new Date();
      if (options.skip && lease.closedReason !== 'verdict') {
        const until = new Date(now.getTime() + this.config.sessionHours * 3_600_000);
        await this.db.query(
          m,
          `INSERT INTO lease_skips (reviewer_id, item_id, desk_id, skipped_at, expires_at) VALUES ($1, $2, $3, $4, $5)
           ON CONFLICT (reviewer_id, item_id) DO UPDATE SET skipped_at = excluded.skipped_at, expires_at = excluded.expires_at`,
          [reviewer.id, lease.itemId, lease.deskId, this.db.time(now), this.db.time(until)],
        );
      }
      if (lease.closedAt) return;
      await m.update(LeaseEntity, { id: leaseId }, { closedAt: now, closedReason: 'returned' });
      await this.db.query(
        m,
        `UPDATE items SET state = 'open', lease_id = NULL, leased_until = NULL WHERE id = $1 AND lease_id = $2`,
        [lease.itemId, leaseId],
      );
      await this.db.query(
        m,
        `UPDATE second_opinions SET state = 'due', lease_id = NULL, leased_until = NULL WHERE lease_id = $1 AND state = 'leased'`,
        [leaseId],
      );
      await this.audit.record(m, reviewer, {
        action: 'lease.return',
        entityType: 'lease',
        entityId: leaseId,
        deskId: lease.deskId,
        after: { itemId: lease.itemId, ...(options.skip ? { skip: true } : {}) },
      });
    });
  }

  /** The reviewer's open, unexpired leases on a desk (to resume after a reload). */
  async mine(reviewer: Principal, deskId: number): Promise<Array<{ id: string; itemId: number; expiresAt: Date }>> {
    const rows: Array<{ id: string; item_id: number; expires_at: unknown }> = await this.db.query(
      null,
      `SELECT l.id, l.item_id, l.expires_at FROM leases l JOIN items i ON i.id = l.item_id LEFT JOIN second_opinions so ON so.item_id = l.item_id AND so.lease_id = l.id
       WHERE (i.lease_id = l.id OR so.lease_id = l.id) AND l.desk_id = $1 AND l.reviewer_id = $2 AND l.closed_at IS NULL AND l.expires_at > $3 ORDER BY l.created_at`,
      [deskId, reviewer.id, this.db.time(new Date())],
    );
    return rows.map((r) => ({ id: r.id, itemId: r.item_id, expiresAt: this.db.parseTime(r.expires_at)! }));
  }
}

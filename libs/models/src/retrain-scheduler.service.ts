import { Inject, Injectable, Logger } from '@nestjs/common';
import { Database, DeskDirectory, type DbInt } from '#database';
import { JOBS, JobQueueService } from '#queues';

/** Verdicts of each training category a desk needs before its first model. */
export const FIRST_MODEL_MIN_PER_CATEGORY = 2;
const COALESCE_MS = 300;

/**
 * Decides when a desk retrains. A burst of verdicts gives one retrain: every
 * request until a new version starts maps to one job id (desk and the newest
 * version's verdict watermark). The job runs when `retrainEvery` verdicts
 * are new, or `retrainAfterSeconds` after the first of them, whichever comes
 * first; the first model as soon as every category has
 * {@link FIRST_MODEL_MIN_PER_CATEGORY} training verdicts.
 */
@Injectable()
export class RetrainScheduler {
  private readonly logger = new Logger('RetrainScheduler');
  private readonly pending = new Map<number, { timer: NodeJS.Timeout | null; last: number }>();

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  /**
   * Notes that a desk's verdicts or pool changed. Cheap to call on every
   * verdict: calls within {@link COALESCE_MS} collapse into one check.
   */
  nudge(deskId: number, reason: 'verdict' | 'undo' | 'import' | 'settle' | 'sweep' = 'verdict'): void {
    const now = Date.now();
    const p = this.pending.get(deskId) ?? { timer: null, last: 0 };
    this.pending.set(deskId, p);
    if (p.timer) return;
    const wait = Math.max(0, p.last + COALESCE_MS - now);
    p.timer = setTimeout(() => {
      p.timer = null;
      p.last = Date.now();
      this.check(deskId, reason).catch((e: unknown) =>
        this.logger.warn(`retrain check of desk ${deskId} failed: ${(e as Error).message}`),
      );
    }, wait);
    p.timer.unref();
  }

  /** Stops pending checks (at shutdown). */
  cancelAll(): void {
    for (const p of this.pending.values()) if (p.timer) clearTimeout(p.timer);
    this.pending.clear();
  }

  /** Looks at the desk now and enqueues (or hastens) its retrain job; returns the delay chosen, or null. */
  async check(deskId: number, reason: string = 'verdict'): Promise<number | null> {
    this.directory.forget(deskId);
    const entry = await this.directory.get(deskId);
    if (!entry) return null;
    const { desk, categories } = entry;
    // Aggregates answer one row; MAX is null over no rows.
    const [w] = await this.db.query<{ base: DbInt | null; live: DbInt }>(
      null,
      `SELECT MAX(verdict_watermark) AS base, COUNT(*) AS live FROM model_versions WHERE desk_id = $1 AND state IN ('training', 'scoring', 'published')`,
      [deskId],
    );
    const base = Number(w.base ?? 0);
    const hasModel = Number(w.live) > 0;
    let delay: number | null;
    if (!hasModel) {
      const rows = await this.db.query<{ category_id: DbInt; n: DbInt }>(
        null,
        `SELECT category_id, COUNT(DISTINCT item_id) AS n FROM verdicts WHERE desk_id = $1 AND undone_at IS NULL AND category_id IS NOT NULL AND draw <> 'random' GROUP BY category_id`,
        [deskId],
      );
      const have = new Map(rows.map((r) => [Number(r.category_id), Number(r.n)]));
      delay = categories.every((c) => (have.get(c.id) ?? 0) >= FIRST_MODEL_MIN_PER_CATEGORY) ? 0 : null;
    } else {
      const [s] = await this.db.query<{ n: DbInt; first: unknown }>(
        null,
        'SELECT COUNT(*) AS n, MIN(created_at) AS first FROM verdicts WHERE desk_id = $1 AND id > $2',
        [deskId, base],
      );
      const n = Number(s.n);
      if (n >= desk.retrainEvery) delay = 0;
      else if (n > 0)
        delay = Math.max(0, this.db.parseTime(s.first)!.getTime() + desk.retrainAfterSeconds * 1000 - Date.now());
      else if (reason === 'undo' || reason === 'import' || reason === 'settle') delay = desk.retrainAfterSeconds * 1000;
      else delay = null;
    }
    if (delay === null) return null;
    const payload = { deskId, base };
    const existing = await this.jobs.job(JOBS.retrainDesk, `retrain-${deskId}-${base}`);
    if (existing) {
      if (delay === 0 && (await existing.isDelayed())) await existing.promote().catch(() => undefined);
      return delay;
    }
    await this.jobs.add(JOBS.retrainDesk, payload, delay > 0 ? { delay } : {});
    return delay;
  }
}

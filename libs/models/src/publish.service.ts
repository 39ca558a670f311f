import { Inject, Injectable, Logger } from '@nestjs/common';
import { Database, type DbInt } from '#database';
import { JOBS, JobQueueService, type PublishVersionPayload } from '#queues';

/**
 * Makes a fully scored version current, in one transaction: every scored
 * item takes its new priority and the desk switches version. Reviewers
 * never see a half-scored pool; a superseded version is discarded, and so is
 * one older than the version already current (two may score at once: see
 * versionsToSupersede).
 */
@Injectable()
export class PublishService {
  private readonly logger = new Logger('Publish');

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  async run(p: PublishVersionPayload): Promise<{ published: boolean; reason?: string }> {
    const started = Date.now();
    const result = await this.db.write(async (m) => {
      // The desk row first: the lock a version takes to change state (TrainingService takes it too).
      const desk = await this.db.queryOne<{ current: DbInt | null }>(
        m,
        `SELECT current_model_version AS current FROM desks WHERE id = $1${this.db.lockRows({ noKey: true })}`,
        [p.deskId],
      );
      const v = await this.db.queryOne<{ state: string; timings: string }>(
        m,
        `SELECT state, timings FROM model_versions WHERE desk_id = $1 AND version = $2${this.db.lockRows()}`,
        [p.deskId, p.version],
      );
      if (!v || v.state !== 'scoring') return { published: false, reason: `version is ${v?.state ?? 'gone'}` };
      // A newer version was published while this one scored (both may score at once): this one is stale.
      const current = desk?.current == null ? null : Number(desk.current);
      if (current !== null && current > p.version) {
        await this.db.query(m, `UPDATE model_versions SET state = 'superseded' WHERE desk_id = $1 AND version = $2`, [
          p.deskId,
          p.version,
        ]);
        return { published: false, reason: `version ${current} is newer and current` };
      }
      // Fresh statistics on the rows the chunks just wrote, so the planner joins them by hash rather than row by row.
      // Only the join columns: statistics of the probabilities text would cost time and guide nothing.
      if (this.db.pg) await this.db.query(m, 'ANALYZE predictions (desk_id, model_version, item_id)');
      await this.db.query(
        m,
        `UPDATE items SET priority = predictions.priority, priority_model_version = $1 FROM predictions
         WHERE predictions.item_id = items.id AND predictions.model_version = $1 AND items.desk_id = $2 AND predictions.desk_id = $2`,
        [p.version, p.deskId],
      );
      await this.db.query(m, `UPDATE desks SET current_model_version = $1 WHERE id = $2`, [p.version, p.deskId]);
      const timings = JSON.parse(v.timings) as Partial<Record<string, number>>;
      timings.scoreMs = started - (timings.scoringStartedAt ?? started);
      timings.publishMs = Date.now() - started;
      await this.db.query(
        m,
        `UPDATE model_versions SET state = 'published', published_at = $1, timings = $2 WHERE desk_id = $3 AND version = $4`,
        [this.db.time(new Date()), JSON.stringify(timings), p.deskId, p.version],
      );
      // Older versions still on their way would only be refused when they finish: they stop now.
      await this.db.query(
        m,
        `UPDATE model_versions SET state = 'superseded' WHERE desk_id = $1 AND version < $2 AND state IN ('training', 'scoring')`,
        [p.deskId, p.version],
      );
      return { published: true };
    });
    // Predictions no one will serve: older versions once this one is current, or this one when it was discarded.
    if (result.published) {
      await this.db.write((m) =>
        this.db.query(m, `DELETE FROM predictions WHERE desk_id = $1 AND model_version < $2`, [p.deskId, p.version]),
      );
    } else {
      await this.db.write((m) =>
        this.db.query(
          m,
          `DELETE FROM predictions WHERE desk_id = $1 AND model_version = $2 AND model_version NOT IN (SELECT current_model_version FROM desks WHERE id = $1 AND current_model_version IS NOT NULL)`,
          [p.deskId, p.version],
        ),
      );
    }
    if (result.published) {
      this.logger.log(`desk ${p.deskId}: version ${p.version} is current`);
      // Items imported while this version scored were not in its chunks: it scores them now.
      await this.jobs.add(JOBS.scoreNewItems, { deskId: p.deskId, cause: `v${p.version}` });
    }
    // The oversight report of the version now current; also on a retry after the switch, in case that enqueue was lost.
    if (result.published || result.reason === 'version is published')
      await this.jobs.add(JOBS.writeReport, { deskId: p.deskId, version: p.version });
    return result;
  }
}

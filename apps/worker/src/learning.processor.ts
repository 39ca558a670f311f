import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { APP_CONFIG, type AppConfig } from '#config';
import { Database, type DbInt } from '#database';
import { PublishService, RetrainScheduler, ScoringService, TrainingService } from '#models';
import {
  JOBS,
  JobQueueService,
  type JobHandler,
  type PublishVersionPayload,
  type RetrainDeskPayload,
  type ScoreChunkPayload,
  type ScoreNewItemsPayload,
  type SweepDesksPayload,
} from '#queues';

@Injectable()
export class RetrainDeskProcessor implements JobHandler<'retrain-desk'> {
  readonly jobName = JOBS.retrainDesk;
  constructor(
    @Inject(TrainingService) private readonly training: TrainingService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  handle(job: Job<RetrainDeskPayload>): Promise<unknown> {
    return this.training.run(job.data, this.config.scoringChunkSize);
  }
}

@Injectable()
export class ScoreChunkProcessor implements JobHandler<'score-chunk'> {
  readonly jobName = JOBS.scoreChunk;
  constructor(@Inject(ScoringService) private readonly scoring: ScoringService) {}

  handle(job: Job<ScoreChunkPayload>): Promise<unknown> {
    return this.scoring.run(job.data);
  }
}

@Injectable()
export class ScoreNewItemsProcessor implements JobHandler<'score-new-items'> {
  readonly jobName = JOBS.scoreNewItems;
  constructor(
    @Inject(ScoringService) private readonly scoring: ScoringService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  handle(job: Job<ScoreNewItemsPayload>): Promise<unknown> {
    return this.scoring.scoreNew(job.data.deskId, this.config.scoringChunkSize);
  }
}

@Injectable()
export class PublishVersionProcessor implements JobHandler<'publish-version'> {
  readonly jobName = JOBS.publishVersion;
  constructor(@Inject(PublishService) private readonly publish: PublishService) {}

  handle(job: Job<PublishVersionPayload>): Promise<unknown> {
    return this.publish.run(job.data);
  }
}

/**
 * Finds desks with verdicts no version has learned from — for instance
 * verdicts taken while Redis was down, whose retrain request was lost — and
 * asks for their retrain; and published versions that have no report yet
 * (their report job was lost, or they predate reports), and asks for it.
 */
@Injectable()
export class SweepDesksProcessor implements JobHandler<'sweep-desks'> {
  readonly jobName = JOBS.sweepDesks;
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(RetrainScheduler) private readonly retrain: RetrainScheduler,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  async handle(_job: Job<SweepDesksPayload>): Promise<unknown> {
    // A report job still queued has the same id, so asking again is a no-op.
    const unreported = await this.db.query<{ desk_id: DbInt; version: DbInt }>(
      null,
      `SELECT m.desk_id, m.version FROM model_versions m WHERE m.state = 'published' AND NOT EXISTS (SELECT 1 FROM model_reports r WHERE r.desk_id = m.desk_id AND r.version = m.version) ORDER BY m.desk_id, m.version`,
    );
    for (const r of unreported)
      await this.jobs.add(JOBS.writeReport, { deskId: Number(r.desk_id), version: Number(r.version) });
    const behind = await this.db.query<{ id: DbInt }>(
      null,
      `SELECT d.id FROM desks d WHERE EXISTS (SELECT 1 FROM verdicts v WHERE v.desk_id = d.id AND v.id > COALESCE((SELECT MAX(m.verdict_watermark) FROM model_versions m WHERE m.desk_id = d.id AND m.state IN ('training', 'scoring', 'published')), 0))`,
    );
    for (const d of behind) await this.retrain.check(Number(d.id), 'sweep');
    return { desks: behind.length, reports: unreported.length };
  }
}

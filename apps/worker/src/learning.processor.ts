import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { APP_CONFIG, type AppConfig } from '#config';
import { ModelVersionsRepository, PublishService, RetrainScheduler, ScoringService, TrainingService } from '#models';
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
    @Inject(ModelVersionsRepository) private readonly repository: ModelVersionsRepository,
    @Inject(RetrainScheduler) private readonly retrain: RetrainScheduler,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  async handle(_job: Job<SweepDesksPayload>): Promise<unknown> {
    // A report job still queued has the same id, so asking again is a no-op.
    const { unreported, behind } = await this.repository.backlog();
    for (const r of unreported) await this.jobs.add(JOBS.writeReport, { deskId: r.deskId, version: r.version });
    for (const deskId of behind) await this.retrain.check(deskId, 'sweep');
    return { desks: behind.length, reports: unreported.length };
  }
}

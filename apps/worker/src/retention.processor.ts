import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { APP_CONFIG, type AppConfig } from '#config';
import { JOBS, JobQueueService, type ApplyRetentionPayload, type JobHandler } from '#queues';
import { askRecount, RetentionService } from '#retention';

/** The daily run of every desk's retention periods; the erasures it records name `retention` as their actor. */
@Injectable()
export class ApplyRetentionProcessor implements JobHandler<'apply-retention'> {
  readonly jobName = JOBS.applyRetention;
  constructor(
    @Inject(RetentionService) private readonly retention: RetentionService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  async handle(_job: Job<ApplyRetentionPayload>): Promise<unknown> {
    const runs = await this.retention.runAll({ id: null, name: 'retention' });
    for (const r of runs) if (r.items > 0) await askRecount(this.jobs, this.config, r.deskId);
    // The job's result: counts only.
    return runs.filter((r) => r.items > 0).map((r) => ({ deskId: r.deskId, items: r.items }));
  }
}

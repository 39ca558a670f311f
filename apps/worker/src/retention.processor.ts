import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { JOBS, type ApplyRetentionPayload, type JobHandler } from '#queues';
import { RetentionService } from '#retention';

/** The daily run of every desk's retention periods; the erasures it records name `retention` as their actor. */
@Injectable()
export class ApplyRetentionProcessor implements JobHandler<'apply-retention'> {
  readonly jobName = JOBS.applyRetention;
  constructor(@Inject(RetentionService) private readonly retention: RetentionService) {}

  async handle(_job: Job<ApplyRetentionPayload>): Promise<unknown> {
    const runs = await this.retention.runAll({ id: null, name: 'retention' });
    // The job's result: counts only.
    return runs.filter((r) => r.items > 0).map((r) => ({ deskId: r.deskId, items: r.items }));
  }
}

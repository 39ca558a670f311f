import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { SimulatedReviewerService, verdictsSoFar } from '#demo';
import { JOBS, type JobHandler, type SimulateReviewerPayload } from '#queues';

/** Runs the demo's simulated reviewer; its verdict count is the job's progress. */
@Injectable()
export class SimulateReviewerProcessor implements JobHandler<'simulate-reviewer'> {
  readonly jobName = JOBS.simulateReviewer;
  constructor(@Inject(SimulatedReviewerService) private readonly reviewer: SimulatedReviewerService) {}
  handle(job: Job<SimulateReviewerPayload>): Promise<unknown> {
    return this.reviewer.run(job.data, (verdicts) => job.updateProgress({ verdicts }), verdictsSoFar(job.progress));
  }
}

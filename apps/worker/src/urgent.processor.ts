import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { JOBS, type JobHandler, type NotifyUrgentPayload } from '#queues';
import { UrgentNotifier } from '#verdicts';

/** Announces an urgent escalation to the webhook; a failed delivery throws, and the queue retries it. */
@Injectable()
export class NotifyUrgentProcessor implements JobHandler<'notify-urgent'> {
  readonly jobName = JOBS.notifyUrgent;
  constructor(@Inject(UrgentNotifier) private readonly notifier: UrgentNotifier) {}

  handle(job: Job<NotifyUrgentPayload>): Promise<unknown> {
    return this.notifier.deliver(job.data);
  }
}

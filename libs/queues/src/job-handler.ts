import type { Job } from 'bullmq';
import { JOBS, type JobName, type JobPayloads } from './queue-names.js';

/** What a worker-side processor offers: the job names it handles, and how. */
export interface JobHandler<N extends JobName = JobName> {
  readonly jobName: N;
  handle(job: Job<JobPayloads[N]>): Promise<unknown>;
}

/**
 * Maps job names to handlers; fails at start-up when a job name has no
 * handler or two, so a missing processor cannot silently stall a queue.
 */
export function handlerTable(handlers: readonly JobHandler[]): Map<JobName, JobHandler> {
  const table = new Map<JobName, JobHandler>();
  const problems: string[] = [];
  for (const h of handlers) {
    if (table.has(h.jobName)) problems.push(`job ${h.jobName} has two handlers`);
    table.set(h.jobName, h);
  }
  for (const name of Object.values(JOBS)) if (!table.has(name)) problems.push(`job ${name} has no handler`);
  for (const name of table.keys())
    if (!(Object.values(JOBS) as string[]).includes(name)) problems.push(`handler for unknown job ${name}`);
  if (problems.length) throw new Error(`Worker set-up is wrong: ${problems.join('; ')}`);
  return table;
}

import type { Logger } from 'pino';

/** What a job line needs of a BullMQ job. */
export interface LoggedJob {
  id?: string;
  name: string;
  queueName: string;
  attemptsMade: number;
  processedOn?: number;
  finishedOn?: number;
  opts: { attempts?: number };
}

/**
 * One line per finished job attempt: queue, name, id, outcome and how long it ran. A failed attempt that BullMQ will
 * try again says so (`outcome: "retrying"`); ids only, never a payload.
 */
export function logJob(
  logger: Logger,
  job: LoggedJob,
  error?: Error,
): { outcome: 'completed' | 'retrying' | 'failed'; durationMs: number | null } {
  const durationMs = job.processedOn !== undefined ? (job.finishedOn ?? Date.now()) - job.processedOn : null;
  const fields = {
    queue: job.queueName,
    job: job.name,
    jobId: job.id ?? null,
    attempt: job.attemptsMade,
    durationMs,
  };
  if (!error) {
    logger.info({ ...fields, outcome: 'completed' }, `job ${job.queueName}/${job.name} ${job.id ?? ''} completed`);
    return { outcome: 'completed', durationMs };
  }
  const retrying = error.name !== 'UnrecoverableError' && job.attemptsMade < (job.opts.attempts ?? 1);
  const outcome = retrying ? 'retrying' : 'failed';
  logger[retrying ? 'warn' : 'error'](
    { ...fields, outcome, error: error.message },
    `job ${job.queueName}/${job.name} ${job.id ?? ''} ${outcome}: ${error.message}`,
  );
  return { outcome, durationMs };
}

import type { JobsOptions } from 'bullmq';
import { JOBS, type JobName, type JobPayloads } from './queue-names.js';

const keep = { removeOnComplete: { age: 24 * 3600, count: 1000 }, removeOnFail: { age: 7 * 24 * 3600 } } as const;

/**
 * Options of each job, decided in one place: de-duplication by job id,
 * attempts and backoff, retention.
 */
export function jobOptions<N extends JobName>(name: N, payload: JobPayloads[N]): JobsOptions {
  switch (name) {
    case JOBS.importFile:
      // One job per import; a retried job resumes after the last committed batch.
      return { ...keep, jobId: `import-${(payload as JobPayloads['import-file']).importId}`, attempts: 5, backoff: { type: 'exponential', delay: 2000 } };
    case JOBS.reseedDesk:
      // A job id with a time bucket: a burst of edits gives one recount, a later edit a new one.
      return { ...keep, jobId: `reseed-${(payload as JobPayloads['reseed-desk']).deskId}-${Date.now()}`, attempts: 3, backoff: { type: 'exponential', delay: 1000 } };
    default:
      throw new TypeError(`no job options for job name ${JSON.stringify(name)}`);
  }
}

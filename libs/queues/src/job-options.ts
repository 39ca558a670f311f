import type { JobsOptions } from 'bullmq';
import { JOBS, type JobName, type JobPayloads } from './queue-names.js';

const keep = { removeOnComplete: { age: 24 * 3600, count: 1000 }, removeOnFail: { age: 7 * 24 * 3600 } } as const;
// Jobs whose id is reused for a later request must not linger once finished.
const vanish = { removeOnComplete: true, removeOnFail: true } as const;

/**
 * Options of each job, decided in one place: de-duplication by job id,
 * attempts and backoff, retention.
 */
export function jobOptions<N extends JobName>(name: N, payload: JobPayloads[N]): JobsOptions {
  switch (name) {
    case JOBS.importFile:
      // One job per import; a retried job resumes after the last committed batch.
      return {
        ...keep,
        jobId: `import-${(payload as JobPayloads['import-file']).importId}`,
        attempts: 5,
        backoff: { type: 'exponential', delay: 2000 },
      };
    case JOBS.reseedDesk:
      // A job id with a time bucket: a burst of edits gives one recount, a later edit a new one.
      return {
        ...keep,
        jobId: `reseed-${(payload as JobPayloads['reseed-desk']).deskId}-${Date.now()}`,
        attempts: 3,
        backoff: { type: 'exponential', delay: 1000 },
      };
    case JOBS.retrainDesk: {
      // One id per desk and watermark: every verdict until a new version starts maps to the same job.
      const p = payload as JobPayloads['retrain-desk'];
      return {
        ...vanish,
        jobId: `retrain-${p.deskId}-${p.base}`,
        attempts: 5,
        backoff: { type: 'exponential', delay: 1000 },
      };
    }
    case JOBS.scoreChunk: {
      const p = payload as JobPayloads['score-chunk'];
      // Kept for an hour after completion: which worker scored which chunk is worth seeing. A chunk that failed for good
      // is removed at once: the retried retrain adds the same chunk ids again, and a kept failed job would block them.
      return {
        removeOnComplete: { age: 3600 },
        removeOnFail: true,
        jobId: `score-${p.deskId}-v${p.version}-${p.fromId}`,
        attempts: 5,
        backoff: { type: 'exponential', delay: 500 },
        failParentOnFailure: true,
      };
    }
    case JOBS.scoreNewItems: {
      // One job per cause (an import, a publication): a later import is a new job, a retry the same one.
      const p = payload as JobPayloads['score-new-items'];
      return {
        ...vanish,
        jobId: `score-new-${p.deskId}-${p.cause}`,
        attempts: 5,
        backoff: { type: 'exponential', delay: 1000 },
      };
    }
    case JOBS.publishVersion: {
      const p = payload as JobPayloads['publish-version'];
      return {
        ...vanish,
        jobId: `publish-${p.deskId}-v${p.version}`,
        attempts: 5,
        backoff: { type: 'exponential', delay: 500 },
      };
    }
    case JOBS.writeReport: {
      // One id per desk and version: a second request while one is queued or running is the same job; once done the id is free, so a report can be written again.
      const p = payload as JobPayloads['write-report'];
      return {
        ...vanish,
        jobId: `report-${p.deskId}-v${p.version}`,
        attempts: 3,
        backoff: { type: 'exponential', delay: 2000 },
      };
    }
    case JOBS.countTerms:
      // One id per desk, delayed by the caller: a burst of imports or seed-term edits gives one count, which reads
      // the pool as it is when it runs. Removed when done so the next request can use the id again.
      return {
        ...vanish,
        jobId: `terms-${(payload as JobPayloads['count-terms']).deskId}`,
        attempts: 3,
        backoff: { type: 'exponential', delay: 2000 },
      };
    case JOBS.notifyUrgent:
      // One delivery per escalation; a receiver that is down gets it again, 1 s, 2 s, 4 s… apart (about 4 minutes in all).
      return {
        ...keep,
        jobId: `urgent-${(payload as JobPayloads['notify-urgent']).escalationId}`,
        attempts: 8,
        backoff: { type: 'exponential', delay: 1000 },
      };
    case JOBS.sweepDesks:
      return { ...vanish, jobId: 'sweep-desks', attempts: 1 };
    case JOBS.applyRetention:
      // Each batch commits on its own and a retry judges the items again, so a failed run can simply run again.
      return { ...vanish, jobId: 'apply-retention', attempts: 3, backoff: { type: 'exponential', delay: 60_000 } };
    case JOBS.simulateReviewer:
      // One run per desk at a time; kept a day so its final count stays readable. A retry (after a worker
      // crash or shutdown) goes on until the same end time.
      return {
        ...keep,
        removeOnComplete: { age: 24 * 3600 },
        jobId: `simulate-${(payload as JobPayloads['simulate-reviewer']).deskId}`,
        attempts: 3,
        backoff: { type: 'fixed', delay: 1000 },
      };
    default:
      throw new TypeError(`no job options for job name ${JSON.stringify(name)}`);
  }
}

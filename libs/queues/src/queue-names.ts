/**
 * Every queue and job name of the service, and each job's payload.
 * Payloads carry ids only: no text of an item ever goes through Redis.
 */
export const QUEUES = {
  imports: 'imports',
  maintenance: 'maintenance',
} as const;
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES];

export const JOBS = {
  /** Read an uploaded file and write its rows as items. */
  importFile: 'import-file',
  /** Recount seed-term matches of a desk's open items after its seed terms changed. */
  reseedDesk: 'reseed-desk',
} as const;
export type JobName = (typeof JOBS)[keyof typeof JOBS];

export interface ImportFilePayload {
  importId: string;
}

export interface ReseedDeskPayload {
  deskId: number;
}

/** Which queue carries which job. */
export const JOB_QUEUE: Record<JobName, QueueName> = {
  [JOBS.importFile]: QUEUES.imports,
  [JOBS.reseedDesk]: QUEUES.maintenance,
};

export interface JobPayloads {
  [JOBS.importFile]: ImportFilePayload;
  [JOBS.reseedDesk]: ReseedDeskPayload;
}

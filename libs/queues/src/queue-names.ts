/**
 * Every queue and job name of the service, and each job's payload.
 * Payloads carry ids only: no text of an item ever goes through Redis.
 */
export const QUEUES = {
  imports: 'imports',
  maintenance: 'maintenance',
  /** Retrain requests and publishing of model versions. */
  learning: 'learning',
  /** Scoring chunks of a new model version: any worker process takes any chunk. */
  scoring: 'scoring',
  /** The demo's simulated reviewer: its own queue, so a long run never holds up imports or retrains. */
  simulation: 'simulation',
  /** Oversight reports of published model versions. */
  reports: 'reports',
  /** Announcements to outside systems (the urgent webhook): their own queue, so a slow receiver holds up nothing else. */
  notifications: 'notifications',
} as const;
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES];

export const JOBS = {
  /** Read an uploaded file and write its rows as items. */
  importFile: 'import-file',
  /** Recount seed-term matches of a desk's open items after its seed terms changed. */
  reseedDesk: 'reseed-desk',
  /** Train, calibrate and start scoring a new model version of a desk. */
  retrainDesk: 'retrain-desk',
  /** Score one chunk of a desk's open items under a new version. */
  scoreChunk: 'score-chunk',
  /** Make a fully scored version current (the parent of its score-chunk jobs). */
  publishVersion: 'publish-version',
  /** Score a desk's open items that its current version has not scored (imported since), under that version. */
  scoreNewItems: 'score-new-items',
  /** Find desks whose newest verdicts no version has learned from (e.g. taken while Redis was down). */
  sweepDesks: 'sweep-desks',
  /** Run the simulated reviewer on a demo desk until a given time or until stopped. */
  simulateReviewer: 'simulate-reviewer',
  /** Write the oversight report (HTML and JSON) of a published model version. */
  writeReport: 'write-report',
  /** Count word co-occurrences over a desk's pool for its seed-term suggestions. */
  countTerms: 'count-terms',
  /** Erase the items past their desk's retention periods (daily, on every desk). */
  applyRetention: 'apply-retention',
  /** Announce an urgent escalation to the configured webhook (ids only). */
  notifyUrgent: 'notify-urgent',
} as const;
export type JobName = (typeof JOBS)[keyof typeof JOBS];

export interface ImportFilePayload {
  importId: string;
}

export interface ReseedDeskPayload {
  deskId: number;
}

export interface ScoreNewItemsPayload {
  deskId: number;
  /** What asked for it (an import's id, or the version just published): part of the job id. */
  cause: string;
}

export interface RetrainDeskPayload {
  deskId: number;
  /** Verdict watermark of the newest live version when the request was made (part of the job id). */
  base: number;
}

export interface ScoreChunkPayload {
  deskId: number;
  version: number;
  /** Items with fromId ≤ id < toId. */
  fromId: number;
  toId: number;
}

export interface PublishVersionPayload {
  deskId: number;
  version: number;
}

export type SweepDesksPayload = Record<string, never>;
export interface SimulateReviewerPayload {
  deskId: number;
  /** Epoch milliseconds: when the run was asked for (also seeds its pauses and errors) and when it ends. */
  startedAt: number;
  until: number;
}

export interface CountTermsPayload {
  deskId: number;
}

export type ApplyRetentionPayload = Record<string, never>;
/** Ids only: the receiver asks Cribra for anything more, with its own credentials. */
export interface NotifyUrgentPayload {
  escalationId: number;
  deskId: number;
  itemId: number;
  verdictId: number;
  /** ISO 8601. */
  raisedAt: string;
}

export interface WriteReportPayload {
  deskId: number;
  version: number;
}

/** Which queue carries which job. */
export const JOB_QUEUE: Record<JobName, QueueName> = {
  [JOBS.importFile]: QUEUES.imports,
  [JOBS.reseedDesk]: QUEUES.maintenance,
  [JOBS.sweepDesks]: QUEUES.maintenance,
  [JOBS.retrainDesk]: QUEUES.learning,
  [JOBS.publishVersion]: QUEUES.learning,
  [JOBS.scoreChunk]: QUEUES.scoring,
  [JOBS.scoreNewItems]: QUEUES.scoring,
  [JOBS.simulateReviewer]: QUEUES.simulation,
  [JOBS.writeReport]: QUEUES.reports,
  [JOBS.countTerms]: QUEUES.maintenance,
  [JOBS.applyRetention]: QUEUES.maintenance,
  [JOBS.notifyUrgent]: QUEUES.notifications,
};

export interface JobPayloads {
  [JOBS.importFile]: ImportFilePayload;
  [JOBS.reseedDesk]: ReseedDeskPayload;
  [JOBS.retrainDesk]: RetrainDeskPayload;
  [JOBS.scoreChunk]: ScoreChunkPayload;
  [JOBS.scoreNewItems]: ScoreNewItemsPayload;
  [JOBS.publishVersion]: PublishVersionPayload;
  [JOBS.sweepDesks]: SweepDesksPayload;
  [JOBS.simulateReviewer]: SimulateReviewerPayload;
  [JOBS.writeReport]: WriteReportPayload;
  [JOBS.countTerms]: CountTermsPayload;
  [JOBS.applyRetention]: ApplyRetentionPayload;
  [JOBS.notifyUrgent]: NotifyUrgentPayload;
}

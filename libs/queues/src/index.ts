export {
  QUEUES,
  JOBS,
  JOB_QUEUE,
  type QueueName,
  type JobName,
  type JobPayloads,
  type ImportFilePayload,
  type ReseedDeskPayload,
  type RetrainDeskPayload,
  type ScoreChunkPayload,
  type ScoreNewItemsPayload,
  type PublishVersionPayload,
  type SweepDesksPayload,
  type SimulateReviewerPayload,
  type WriteReportPayload,
  type CountTermsPayload,
  type ApplyRetentionPayload,
  type NotifyUrgentPayload,
} from './queue-names.js';
export { jobOptions } from './job-options.js';
export { atMostEvery, createRedis, isRedisUnavailable, REQUEST_REDIS_TIMEOUT_MS } from './redis.js';
export { JobQueueService, REDIS } from './job-queue.service.js';
export { QueuesModule } from './queues.module.js';
export { handlerTable, type JobHandler } from './job-handler.js';
export { recordJob, readJobFigures, type JobFigure, type JobOutcome } from './job-metrics.js';
export { checkDependencies, READY_TIMEOUT_MS } from './readiness.js';

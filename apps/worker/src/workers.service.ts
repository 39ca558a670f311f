import { hostname } from 'node:os';
import { Inject, Injectable, Logger, type OnApplicationBootstrap, type OnApplicationShutdown } from '@nestjs/common';
import { UnrecoverableError, Worker, type Job } from 'bullmq';
import { isDomainError } from '#errors';
import type { Redis } from 'ioredis';
import type { Logger as Pino } from 'pino';
import { APP_CONFIG, type AppConfig } from '#config';
import { logJob, ROOT_LOGGER } from '#logging';
import {
  atMostEvery,
  createRedis,
  handlerTable,
  JOB_QUEUE,
  JOBS,
  JobQueueService,
  QUEUES,
  recordJob,
  REDIS,
  type JobHandler,
  type JobName,
} from '#queues';
import { CountTermsProcessor, ImportFileProcessor, ReseedDeskProcessor } from './import.processor.js';
import {
  PublishVersionProcessor,
  RetrainDeskProcessor,
  ScoreChunkProcessor,
  ScoreNewItemsProcessor,
  SweepDesksProcessor,
} from './learning.processor.js';
import { SimulateReviewerProcessor } from './simulation.processor.js';
import { WriteReportProcessor } from './report.processor.js';
import { ApplyRetentionProcessor } from './retention.processor.js';
import { NotifyUrgentProcessor } from './urgent.processor.js';

export const JOB_HANDLERS = Symbol('JOB_HANDLERS');
/** Simulated reviewers mostly wait (their pauses), so one worker runs several desks' at once. */
const SIMULATIONS_PER_WORKER = 4;

/**
 * Jobs a worker process runs at once, per queue. Two scoring chunks at once:
 * while one waits for its predictions to be written, the other computes.
 */
/**
 * How often a job may lose its lock (a worker killed, or too busy to renew it) and be taken up again before it fails.
 * Every handler is idempotent (retrains resume by their job key, chunks write nothing twice), so a few takeovers are safe;
 * BullMQ's default of one fails a job the second time a busy machine delays a renewal.
 */
const MAX_STALLED = 5;
const CONCURRENCY: Partial<Record<string, number>> = {
  [QUEUES.imports]: 2,
  [QUEUES.scoring]: 2,
  [QUEUES.simulation]: SIMULATIONS_PER_WORKER,
};

/**
 * Runs one BullMQ worker per queue and dispatches each job to the one handler
 * of its name. The handler table is checked at start-up.
 */
@Injectable()
export class WorkersService implements OnApplicationBootstrap, OnApplicationShutdown {
  private readonly logger = new Logger('Workers');
  private readonly workers: Worker[] = [];
  private readonly table: Map<JobName, JobHandler>;
  /** Worker errors, mostly Redis going away (each queue's connections report every reconnect attempt): one line per 30 s. */
  private readonly workerError = atMostEvery(30_000, (queue: string, e: Error) =>
    this.logger.error(`worker ${queue}: ${e.message}`),
  );

  constructor(
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(JOB_HANDLERS) handlers: JobHandler[],
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(ROOT_LOGGER) private readonly log: Pino,
    @Inject(REDIS) private readonly redis: Redis,
  ) {
    this.table = handlerTable(handlers);
  }

  async onApplicationBootstrap(): Promise<void> {
    if (!this.config.redisUrl) throw new Error('REDIS_URL is not set');
    for (const queue of Object.values(QUEUES)) {
      const connection = createRedis(this.config.redisUrl, `cribra-worker-${queue}-${process.pid}`);
      const worker = new Worker(
        queue,
        async (job) => {
          const handler = this.table.get(job.name as JobName);
          if (!handler || JOB_QUEUE[job.name as JobName] !== queue)
            throw new UnrecoverableError(`no handler for job ${job.name} on queue ${queue}`);
          return handler.handle(job as never).catch((e: unknown) => {
            throw retryOrGiveUp(e);
          });
        },
        {
          name: `${hostname()}:${process.pid}`,
          connection,
          prefix: this.config.queuePrefix,
          concurrency: CONCURRENCY[queue] ?? 1,
          lockDuration: this.config.jobLockSeconds * 1000,
          stalledInterval: Math.min(30_000, this.config.jobLockSeconds * 1000),
          maxStalledCount: MAX_STALLED,
        },
      );
      worker.on('error', (e) => this.workerError(queue, e));
      // One line per finished attempt (see logJob); a job that failed before it was read has no job to describe.
      // …and the same attempt counted in Redis, where the API's /metrics reads every worker's figures.
      const finished = (job: Job, e?: Error) => {
        const { outcome, durationMs } = logJob(this.log, job, e);
        recordJob(this.redis, this.config.queuePrefix, {
          queue,
          job: job.name,
          outcome,
          seconds: (durationMs ?? 0) / 1000,
        }).catch((err: unknown) => this.logger.warn(`job figures not recorded: ${(err as Error).message}`));
      };
      worker.on('completed', (job) => finished(job));
      worker.on('failed', (job, e) =>
        job ? finished(job, e) : this.logger.warn(`a job on ${queue} failed: ${e.message}`),
      );
      this.workers.push(worker);
    }
    // Every SWEEP_SECONDS (default a minute), one worker (whichever takes the job) looks for desks whose verdicts no version has learned from.
    await this.jobs
      .queue(QUEUES.maintenance)
      .upsertJobScheduler(
        'sweep-desks',
        { every: this.config.sweepSeconds * 1000 },
        { name: JOBS.sweepDesks, data: {}, opts: { removeOnComplete: true, removeOnFail: true } },
      );
    // Once a day, at RETENTION_HOUR UTC, one worker erases the items past their desk's retention periods.
    await this.jobs
      .queue(QUEUES.maintenance)
      .upsertJobScheduler(
        'apply-retention',
        { pattern: `0 ${this.config.retentionHour} * * *`, tz: 'UTC' },
        { name: JOBS.applyRetention, data: {}, opts: { removeOnComplete: true, removeOnFail: true } },
      );
    this.logger.log(`processing queues ${Object.values(QUEUES).join(', ')} with prefix ${this.config.queuePrefix}`);
  }

  /** How many queues this process works, and how many of their BullMQ workers are running (not closed or closing). */
  state(): { queues: number; running: number } {
    return { queues: Object.values(QUEUES).length, running: this.workers.filter((w) => w.isRunning()).length };
  }

  async onApplicationShutdown(): Promise<void> {
    await Promise.all(this.workers.map((w) => w.close()));
  }
}

export const PROCESSORS = [
  ImportFileProcessor,
  ReseedDeskProcessor,
  RetrainDeskProcessor,
  ScoreChunkProcessor,
  ScoreNewItemsProcessor,
  PublishVersionProcessor,
  SweepDesksProcessor,
  SimulateReviewerProcessor,
  WriteReportProcessor,
  CountTermsProcessor,
  ApplyRetentionProcessor,
  NotifyUrgentProcessor,
];

/**
 * The worker's one rule on a failed job: a domain error (`#errors`: bad input, something gone, a clash with the
 * state of things) would fail the same way again, so the job gives up at once; anything else (a lost connection, a
 * lock timeout, a crash) is retried up to the job's attempts.
 */
export function retryOrGiveUp(e: unknown): unknown {
  if (!isDomainError(e)) return e;
  const final = new UnrecoverableError(e.message);
  final.stack = e.stack;
  return final;
}

import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import type { Redis } from 'ioredis';
import { AuditService, type AuditActor } from '#audit';
import { APP_CONFIG, type AppConfig } from '#config';
import { Database, DeskDirectory } from '#database';
import { jobOptions, JobQueueService, JOBS, REDIS, type SimulateReviewerPayload } from '#queues';
import { DemoDeskService } from './demo-desk.service.js';
import { simulationStopKey, STOP_SIGNAL_SECONDS } from './stop-signal.js';
import { Conflict, NotFound } from '#errors';

export type SimulationState = 'idle' | 'running' | 'finished' | 'stopped';

/** What a run of the simulated reviewer returns when it ends. */
export interface SimulationOutcome {
  verdicts: number;
  stopped: boolean;
  /** Why it ended before its time, when it did. */
  detail?: string;
}

/** `GET /api/desks/:deskId/simulation`. */
export interface SimulationStatus {
  available: boolean;
  reason?: string;
  state: SimulationState;
  startedAt?: string;
  until?: string;
  verdicts: number;
  detail?: string;
}

/** The run of a desk (without the availability part). */
export type SimulationRun = Omit<SimulationStatus, 'available' | 'reason'>;

/** The verdict count a run reports as its job's progress (`{ verdicts }`); 0 before the first. */
export function verdictsSoFar(progress: unknown): number {
  return typeof progress === 'object' && progress !== null
    ? Number((progress as { verdicts?: unknown }).verdicts ?? 0)
    : 0;
}

const RUNNING = ['active', 'waiting', 'delayed', 'prioritized', 'waiting-children'];
/** How long `stop` waits for the run to notice; it checks between two items, a second apart at most. */
const STOP_WAIT_MS = 5000;

/** The API side of the simulated reviewer: starts, reads and stops its job. */
@Injectable()
export class SimulationService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(REDIS) private readonly redis: Redis,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(DemoDeskService) private readonly demoDesks: DemoDeskService,
  ) {}

  async status(deskId: number): Promise<SimulationStatus> {
    await this.mustExist(deskId);
    const availability = await this.demoDesks.availability(deskId);
    return { ...availability, ...(await this.run(deskId)) };
  }

  /**
   * Starts a run for `minutes`. 409 when the desk holds anything but
   * generated posts, or when a run is already going (the answer then carries
   * that run's state).
   */
  async start(actor: AuditActor, deskId: number, minutes: number): Promise<SimulationRun> {
    await this.mustExist(deskId);
    const availability = await this.demoDesks.availability(deskId);
    if (!availability.available)
      throw new Conflict(availability.reason ?? 'this desk cannot have a simulated reviewer');
    const current = await this.run(deskId);
    if (current.state === 'running') {
      throw new Conflict(`a simulated reviewer is already working on this desk, until ${current.until}`, {
        ...current,
      });
    }
    // A finished run keeps the job id until it is removed; the new run takes it over.
    await (await this.job(deskId))?.remove();
    await this.redis.del(simulationStopKey(this.config.queuePrefix, deskId));
    const startedAt = Date.now();
    const until = startedAt + minutes * 60_000;
    await this.jobs.add(JOBS.simulateReviewer, { deskId, startedAt, until });
    await this.db.write((m) =>
      this.audit.record(m, actor, {
        action: 'simulation.start',
        entityType: 'desk',
        entityId: deskId,
        deskId,
        after: { minutes, until: new Date(until).toISOString() },
      }),
    );
    return {
      state: 'running',
      startedAt: new Date(startedAt).toISOString(),
      until: new Date(until).toISOString(),
      verdicts: 0,
    };
  }

  /** Stops the desk's run, if one is going, and waits (a few seconds at most) until it has. */
  async stop(actor: AuditActor, deskId: number): Promise<void> {
    await this.mustExist(deskId);
    const job = await this.job(deskId);
    if (!job) return;
    const state = await job.getState();
    if (!RUNNING.includes(state)) return;
    if (state !== 'active') {
      // Not taken by a worker yet: it simply never runs.
      await job.remove();
    } else {
      await this.redis.set(simulationStopKey(this.config.queuePrefix, deskId), '1', 'EX', STOP_SIGNAL_SECONDS);
      const deadline = Date.now() + STOP_WAIT_MS;
      while (Date.now() < deadline && (await job.getState()) === 'active') await new Promise((r) => setTimeout(r, 100));
    }
    await this.db.write((m) =>
      this.audit.record(m, actor, { action: 'simulation.stop', entityType: 'desk', entityId: deskId, deskId }),
    );
  }

  private async run(deskId: number): Promise<SimulationRun> {
    const job = await this.job(deskId);
    if (!job) return { state: 'idle', verdicts: 0 };
    const state = await job.getState();
    const progress = verdictsSoFar(job.progress);
    const times = {
      startedAt: new Date(job.data.startedAt).toISOString(),
      until: new Date(job.data.until).toISOString(),
    };
    if (RUNNING.includes(state)) return { state: 'running', ...times, verdicts: progress };
    if (state === 'completed') {
      // The state can turn to completed between reading the job and reading its state: read the job again for its outcome.
      const out = (job.returnvalue as SimulationOutcome | null) ??
        ((await this.job(deskId))?.returnvalue as SimulationOutcome | null) ?? { verdicts: progress, stopped: false };
      return {
        state: out.stopped ? 'stopped' : 'finished',
        ...times,
        verdicts: out.verdicts,
        ...(out.detail ? { detail: out.detail } : {}),
      };
    }
    return { state: 'stopped', ...times, verdicts: progress, detail: job.failedReason || 'the run failed' };
  }

  private async job(deskId: number): Promise<Job<SimulateReviewerPayload> | undefined> {
    const id = jobOptions(JOBS.simulateReviewer, { deskId, startedAt: 0, until: 0 }).jobId!;
    return this.jobs.job(JOBS.simulateReviewer, id);
  }

  private async mustExist(deskId: number): Promise<void> {
    if (!(await this.directory.get(deskId))) throw new NotFound(`no desk ${deskId}`);
  }
}

import { Inject, Injectable } from '@nestjs/common';
import type { Redis } from 'ioredis';
import { Counter, Gauge, Histogram, collectDefaultMetrics, Registry } from 'prom-client';
import { APP_CONFIG, type AppConfig } from '#config';
import { PredictionsService } from '#models';
import { JobQueueService, QUEUES, readJobFigures, REDIS } from '#queues';
import { MetricsRepository } from './metrics.repository.js';

/** The BullMQ states a queue's jobs are counted in. */
const JOB_STATES = ['waiting', 'prioritized', 'active', 'delayed', 'waiting-children', 'completed', 'failed'] as const;

/**
 * What `GET /metrics` reports, in Prometheus text: this API process's HTTP requests, and at each scrape the queues'
 * job counts (from Redis), every worker's finished jobs (which workers add to a Redis hash, see `recordJob`), and per
 * desk the current version's age, the items by state and the coverage alert (from the database).
 */
@Injectable()
export class ServiceMetrics {
  readonly registry = new Registry();
  private readonly requests: Counter<'method' | 'route' | 'status'>;
  private readonly durations: Histogram<'method' | 'route'>;

  constructor(
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(MetricsRepository) private readonly deskFigures: MetricsRepository,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(REDIS) private readonly redis: Redis,
  ) {
    const registers = [this.registry];
    collectDefaultMetrics({ register: this.registry, prefix: 'cribra_api_' });
    this.requests = new Counter({
      name: 'cribra_http_requests_total',
      help: 'HTTP requests answered by this API process, by method, route pattern and status',
      labelNames: ['method', 'route', 'status'],
      registers,
    });
    this.durations = new Histogram({
      name: 'cribra_http_request_duration_seconds',
      help: 'Time from a request to the end of its answer, by method and route pattern',
      labelNames: ['method', 'route'],
      buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10],
      registers,
    });
    new Gauge({
      name: 'cribra_queue_jobs',
      help: 'Jobs in each BullMQ queue, by state',
      labelNames: ['queue', 'state'],
      registers,
      async collect() {
        this.reset();
        for (const queue of Object.values(QUEUES)) {
          const counts = await jobs.queue(queue).getJobCounts(...JOB_STATES);
          for (const state of JOB_STATES) this.set({ queue, state }, counts[state] ?? 0);
        }
      },
    });
    // Each reads the hash itself: the registry may collect metrics in parallel.
    const jobFigures = (field: 'count' | 'seconds') =>
      async function collect(this: Counter<'queue' | 'job' | 'outcome'>) {
        const figures = await readJobFigures(redis, config.queuePrefix);
        this.reset();
        for (const f of figures) this.inc({ queue: f.queue, job: f.job, outcome: f.outcome }, f[field]);
      };
    new Counter({
      name: 'cribra_job_runs_total',
      help: 'Finished job attempts reported by every worker, by queue, job name and outcome',
      labelNames: ['queue', 'job', 'outcome'],
      registers,
      collect: jobFigures('count'),
    });
    new Counter({
      name: 'cribra_job_duration_seconds_total',
      help: 'Seconds spent in finished job attempts, by queue, job name and outcome (divide by cribra_job_runs_total)',
      labelNames: ['queue', 'job', 'outcome'],
      registers,
      collect: jobFigures('seconds'),
    });
    new Gauge({
      name: 'cribra_desk_model_age_seconds',
      help: "Seconds since the desk's current model version was published (no series before its first version)",
      labelNames: ['desk'],
      registers,
      async collect() {
        this.reset();
        for (const { deskId, publishedAt } of await deskFigures.currentVersionsPublished())
          if (publishedAt) this.set({ desk: String(deskId) }, (Date.now() - publishedAt.getTime()) / 1000);
      },
    });
    new Gauge({
      name: 'cribra_desk_items',
      help: 'Items of each desk by state (open, leased, decided)',
      labelNames: ['desk', 'state'],
      registers,
      async collect() {
        this.reset();
        for (const r of await deskFigures.itemsByState()) this.set({ desk: String(r.deskId), state: r.state }, r.items);
      },
    });
    new Gauge({
      name: 'cribra_desk_coverage_alert',
      help: 'The coverage alert of each desk: 1 when its recent random checks fall short of the promised coverage',
      labelNames: ['desk'],
      registers,
      async collect() {
        this.reset();
        for (const desk of await deskFigures.desks()) {
          const { alert } = await predictions.coverage(desk);
          this.set({ desk: String(desk.id) }, alert.raised ? 1 : 0);
        }
      },
    });
  }

  /** Counts one answered request (called when its answer is finished). */
  observe(method: string, route: string, status: number, seconds: number): void {
    this.requests.inc({ method, route, status: String(status) });
    this.durations.observe({ method, route }, seconds);
  }
}

import { Inject, Injectable, Logger, type OnApplicationShutdown } from '@nestjs/common';
import { FlowProducer, Queue, type Job } from 'bullmq';
import type { Redis } from 'ioredis';
import { APP_CONFIG, type AppConfig } from '#config';
import { jobOptions } from './job-options.js';
import { atMostEvery } from './redis.js';
import { JOB_QUEUE, QUEUES, type JobName, type JobPayloads, type QueueName } from './queue-names.js';

export const REDIS = Symbol('REDIS');

/** Producer side of the queues: the API and the workers enqueue through this. */
@Injectable()
export class JobQueueService implements OnApplicationShutdown {
  private readonly logger = new Logger('JobQueue');
  private readonly queues = new Map<QueueName, Queue>();
  private readonly flows: FlowProducer;
  /**
   * Connection errors while Redis is away come from every queue at each reconnect attempt: without a listener BullMQ
   * prints each one raw on stderr. One warning line per half minute says the same through the process's logger.
   */
  private readonly connectionError = atMostEvery(30_000, (e: Error) => this.logger.warn(`Redis: ${e.message}`));

  constructor(
    @Inject(REDIS) private readonly redis: Redis,
    @Inject(APP_CONFIG) config: AppConfig,
  ) {
    for (const name of Object.values(QUEUES)) {
      const queue = new Queue(name, { connection: redis, prefix: config.queuePrefix });
      queue.on('error', (e) => this.connectionError(e));
      this.queues.set(name, queue);
    }
    this.flows = new FlowProducer({ connection: redis, prefix: config.queuePrefix });
    this.flows.on('error', (e) => this.connectionError(e));
  }

  queue(name: QueueName): Queue {
    const q = this.queues.get(name);
    if (!q) throw new TypeError(`unknown queue ${JSON.stringify(name)}`);
    return q;
  }

  async add<N extends JobName>(name: N, payload: JobPayloads[N], extra: { delay?: number } = {}): Promise<Job> {
    const job = await this.queue(JOB_QUEUE[name]).add(name, payload, { ...jobOptions(name, payload), ...extra });
    this.logger.debug(`enqueued ${name} ${JSON.stringify(payload)}`);
    return job;
  }

  /** The job with this id on the queue of `name`, if it is still there. */
  async job<N extends JobName>(name: N, id: string): Promise<Job<JobPayloads[N]> | undefined> {
    return (await this.queue(JOB_QUEUE[name]).getJob(id)) as Job<JobPayloads[N]> | undefined;
  }

  /**
   * A parent job that runs once all its children are done (a BullMQ flow);
   * the ids come from {@link jobOptions}, so adding the same flow again is a no-op.
   */
  async flow<P extends JobName, C extends JobName>(
    parent: { name: P; payload: JobPayloads[P] },
    children: Array<{ name: C; payload: JobPayloads[C] }>,
  ): Promise<void> {
    await this.flows.add({
      name: parent.name,
      queueName: JOB_QUEUE[parent.name],
      data: parent.payload,
      opts: jobOptions(parent.name, parent.payload),
      children: children.map((c) => ({
        name: c.name,
        queueName: JOB_QUEUE[c.name],
        data: c.payload,
        opts: jobOptions(c.name, c.payload),
      })),
    });
  }

  /** True when Redis answers. */
  async ping(): Promise<boolean> {
    try {
      // PING answers PONG or an error, which rejects.
      await this.redis.ping();
      return true;
    } catch {
      return false;
    }
  }

  async onApplicationShutdown(): Promise<void> {
    await Promise.all([...this.queues.values()].map((q) => q.close()));
    await this.flows.close();
  }
}

import { Inject, Injectable, Logger, type OnApplicationShutdown } from '@nestjs/common';
import { Queue } from 'bullmq';
import type { Redis } from 'ioredis';
import { APP_CONFIG, type AppConfig } from '#config';
import { jobOptions } from './job-options.js';
import { JOB_QUEUE, QUEUES, type JobName, type JobPayloads, type QueueName } from './queue-names.js';

export const REDIS = Symbol('REDIS');

/** Producer side of the queues: the API and the workers enqueue through this. */
@Injectable()
export class JobQueueService implements OnApplicationShutdown {
  private readonly logger = new Logger('JobQueue');
  private readonly queues = new Map<QueueName, Queue>();

  constructor(@Inject(REDIS) private readonly redis: Redis, @Inject(APP_CONFIG) private readonly config: AppConfig) {
    for (const name of Object.values(QUEUES)) this.queues.set(name, new Queue(name, { connection: redis, prefix: config.queuePrefix }));
  }

  queue(name: QueueName): Queue {
    const q = this.queues.get(name);
    if (!q) throw new TypeError(`unknown queue ${JSON.stringify(name)}`);
    return q;
  }

  async add<N extends JobName>(name: N, payload: JobPayloads[N]): Promise<void> {
    await this.queue(JOB_QUEUE[name]).add(name, payload, jobOptions(name, payload));
    this.logger.debug(`enqueued ${name} ${JSON.stringify(payload)}`);
  }

  /** True when Redis answers. */
  async ping(): Promise<boolean> {
    try {
      return (await this.redis.ping()) === 'PONG';
    } catch {
      return false;
    }
  }

  async onApplicationShutdown(): Promise<void> {
    await Promise.all([...this.queues.values()].map((q) => q.close()));
  }
}

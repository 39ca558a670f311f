import { Global, Inject, Module, type DynamicModule, type OnApplicationShutdown } from '@nestjs/common';
import type { Redis } from 'ioredis';
import { APP_CONFIG, type AppConfig } from '#config';
import { JobQueueService, REDIS } from './job-queue.service.js';
import { createRedis } from './redis.js';

@Global()
@Module({})
export class QueuesModule implements OnApplicationShutdown {
  constructor(@Inject(REDIS) private readonly redis: Redis) {}

  /**
   * The process's Redis connection and queues. `commandTimeoutMs` bounds every command on that connection: the API
   * sets it (its commands are sent while a client waits, REQUEST_REDIS_TIMEOUT_MS); workers do not, so
   * that what they enqueue waits through a Redis restart.
   */
  static forRoot(options: { commandTimeoutMs?: number } = {}): DynamicModule {
    return {
      module: QueuesModule,
      providers: [
        {
          provide: REDIS,
          inject: [APP_CONFIG],
          useFactory: (config: AppConfig) => {
            if (!config.redisUrl)
              throw new Error(
                'REDIS_URL is not set: start Cribra with `npm start`, which runs a private redis-server, or set REDIS_URL',
              );
            return createRedis(config.redisUrl, `cribra-${process.pid}`, options);
          },
        },
        JobQueueService,
      ],
      exports: [REDIS, JobQueueService],
    };
  }

  onApplicationShutdown(): void {
    // After JobQueueService closed its queues (Nest shuts down dependants first).
    this.redis.disconnect();
  }
}

import { Global, Inject, Module, type OnApplicationShutdown } from '@nestjs/common';
import type { Redis } from 'ioredis';
import { APP_CONFIG, type AppConfig } from '#config';
import { JobQueueService, REDIS } from './job-queue.service.js';
import { createRedis } from './redis.js';

@Global()
@Module({
  providers: [
    {
      provide: REDIS,
      inject: [APP_CONFIG],
      useFactory: (config: AppConfig) => {
        if (!config.redisUrl)
          throw new Error(
            'REDIS_URL is not set: start Cribra with `npm start`, which runs a private redis-server, or set REDIS_URL',
          );
        return createRedis(config.redisUrl, `cribra-${process.pid}`);
      },
    },
    JobQueueService,
  ],
  exports: [REDIS, JobQueueService],
})
export class QueuesModule implements OnApplicationShutdown {
  constructor(@Inject(REDIS) private readonly redis: Redis) {}

  onApplicationShutdown(): void {
    // After JobQueueService closed its queues (Nest shuts down dependants first).
    this.redis.disconnect();
  }
}

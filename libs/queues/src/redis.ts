import { Redis } from 'ioredis';

/**
 * An ioredis connection for BullMQ. `maxRetriesPerRequest: null` is what
 * BullMQ workers need so a blocking command waits through a Redis restart.
 */
export function createRedis(url: string, name: string): Redis {
  const redis = new Redis(url, {
    maxRetriesPerRequest: null,
    enableReadyCheck: true,
    connectionName: name,
    lazyConnect: false,
  });
  // Without a listener, ioredis prints every reconnect attempt as an unhandled error.
  redis.on('error', () => undefined);
  return redis;
}

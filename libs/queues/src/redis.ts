import { Redis } from 'ioredis';

/**
 * How long a Redis command sent while answering an HTTP request may take before it fails (see
 * {@link isRedisUnavailable}): a request then answers 503 within a few seconds instead of waiting for a Redis that
 * is gone or paused.
 */
export const REQUEST_REDIS_TIMEOUT_MS = 3000;

/**
 * An ioredis connection for BullMQ. `maxRetriesPerRequest: null` is what BullMQ workers need so a blocking command
 * waits through a Redis restart. With `commandTimeoutMs` (the API's connection, whose commands are sent while a
 * client waits), every command fails after that long instead, whether Redis was reachable when it was sent or not.
 */
export function createRedis(url: string, name: string, options: { commandTimeoutMs?: number } = {}): Redis {
  const redis = new Redis(url, {
    maxRetriesPerRequest: null,
    enableReadyCheck: true,
    connectionName: name,
    lazyConnect: false,
    ...(options.commandTimeoutMs ? { commandTimeout: options.commandTimeoutMs } : {}),
  });
  // Without a listener, ioredis prints every reconnect attempt as an unhandled error.
  redis.on('error', () => undefined);
  return redis;
}

/**
 * True when an error says that Redis did not answer (a command timed out, the connection is closed or gave up
 * retrying), as opposed to an error Redis answered with. The API maps these to 503 in one place.
 */
export function isRedisUnavailable(e: unknown): boolean {
  if (!(e instanceof Error)) return false;
  return (
    e.name === 'MaxRetriesPerRequestError' ||
    /^(Command timed out|Connection is closed|Stream isn't writeable)/.test(e.message)
  );
}

/**
 * Wraps a log call so that it runs at most once per `intervalMs`: while Redis is away every queue and worker reports
 * each reconnect attempt, and one line per interval says as much as hundreds.
 */
export function atMostEvery<A extends unknown[]>(intervalMs: number, log: (...args: A) => void): (...args: A) => void {
  let last = -Infinity;
  return (...args: A) => {
    const now = Date.now();
    if (now - last < intervalMs) return;
    last = now;
    log(...args);
  };
}

import { describe, expect, it, vi } from 'vitest';
import { atMostEvery, isRedisUnavailable } from './redis.js';

describe('isRedisUnavailable', () => {
  it('recognises the errors of a Redis that does not answer', () => {
    // The messages ioredis 5 gives (Command.setTimeout, a closed connection, MaxRetriesPerRequestError).
    expect(isRedisUnavailable(new Error('Command timed out'))).toBe(true);
    expect(isRedisUnavailable(new Error('Connection is closed.'))).toBe(true);
    const maxRetries = new Error('Reached the max retries per request limit (which is 1).');
    Object.defineProperty(maxRetries, 'name', { value: 'MaxRetriesPerRequestError' });
    expect(isRedisUnavailable(maxRetries)).toBe(true);
  });

  it('leaves other errors alone, answers from Redis included', () => {
    expect(isRedisUnavailable(new Error('WRONGTYPE Operation against a key holding the wrong kind of value'))).toBe(
      false,
    );
    expect(isRedisUnavailable(new TypeError('x is undefined'))).toBe(false);
    expect(isRedisUnavailable('Command timed out')).toBe(false);
    expect(isRedisUnavailable(null)).toBe(false);
  });
});

describe('atMostEvery', () => {
  it('calls through once per interval and drops the calls in between', () => {
    vi.useFakeTimers();
    try {
      const seen: number[] = [];
      const log = atMostEvery(1000, (n: number) => seen.push(n));
      log(1);
      log(2);
      vi.advanceTimersByTime(999);
      log(3);
      vi.advanceTimersByTime(1);
      log(4);
      expect(seen).toEqual([1, 4]);
    } finally {
      vi.useRealTimers();
    }
  });
});

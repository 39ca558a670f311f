import { Catch, type ArgumentsHost } from '@nestjs/common';
import { BaseExceptionFilter } from '@nestjs/core';
import type express from 'express';
import { isRedisUnavailable, REQUEST_REDIS_TIMEOUT_MS } from '#queues';

/** Seconds a client is asked to wait before trying again. */
const RETRY_AFTER_SECONDS = 5;

/**
 * The one mapping of "Redis did not answer" to HTTP: 503 with `Retry-After` and a message that says so, wherever a
 * request handler met it (enqueueing an import's job, a retrain, a report; reading a simulation's state). Every other
 * error goes on to Nest's own handling.
 */
@Catch()
export class RedisUnavailableFilter extends BaseExceptionFilter {
  override catch(exception: unknown, host: ArgumentsHost): void {
    const res = host.switchToHttp().getResponse<express.Response>();
    if (!isRedisUnavailable(exception) || host.getType() !== 'http' || res.headersSent) {
      super.catch(exception, host);
      return;
    }
    res
      .status(503)
      .setHeader('Retry-After', String(RETRY_AFTER_SECONDS))
      .json({
        statusCode: 503,
        error: 'Service Unavailable',
        message:
          `the job queue (Redis) did not answer within ${REQUEST_REDIS_TIMEOUT_MS / 1000} s, so this request could ` +
          'not be completed; try again shortly',
      });
  }
}

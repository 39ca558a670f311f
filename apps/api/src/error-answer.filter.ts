import { Catch, type ArgumentsHost } from '@nestjs/common';
import { BaseExceptionFilter } from '@nestjs/core';
import { STATUS_CODES } from 'node:http';
import type express from 'express';
import { isDomainError, type ErrorKind } from '#errors';
import { isRedisUnavailable, REQUEST_REDIS_TIMEOUT_MS } from '#queues';

/** Seconds a client is asked to wait before trying again. */
const RETRY_AFTER_SECONDS = 5;

/** The one mapping of a domain error's kind to an HTTP status. */
export const STATUS_OF: Readonly<Record<ErrorKind, number>> = {
  invalid: 400,
  forbidden: 403,
  'not-found': 404,
  conflict: 409,
  gone: 410,
  'too-large': 413,
};

/**
 * The API's answers to errors that are not HTTP's own:
 * - a domain error (`#errors`) from a service answers with its kind's status and its message, in the body Nest gives
 *   its own exceptions (`statusCode`, `error`, `message`), with its details beside them;
 * - "Redis did not answer", wherever a request handler met it (enqueueing an import's job, a retrain, a report;
 *   reading a simulation's state), answers 503 with `Retry-After` and a message that says so.
 * Everything else goes on to Nest's own handling (its HTTP exceptions as they are, anything unknown as a 500).
 */
@Catch()
export class ErrorAnswerFilter extends BaseExceptionFilter {
  override catch(exception: unknown, host: ArgumentsHost): void {
    const res = host.switchToHttp().getResponse<express.Response>();
    if (host.getType() !== 'http' || res.headersSent) {
      super.catch(exception, host);
      return;
    }
    if (isDomainError(exception)) {
      const statusCode = STATUS_OF[exception.kind];
      res.status(statusCode).json({
        ...exception.details,
        statusCode,
        error: STATUS_CODES[statusCode],
        message: exception.messages ?? exception.message,
      });
      return;
    }
    if (isRedisUnavailable(exception)) {
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
      return;
    }
    super.catch(exception, host);
  }
}

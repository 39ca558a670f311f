import { randomUUID } from 'node:crypto';
import type { IncomingMessage, ServerResponse } from 'node:http';
import type { Logger } from 'pino';
import { pinoHttp, type HttpLogger, type Options } from 'pino-http';

/** A client's `X-Request-Id` is kept when it looks like an id (so it cannot smuggle text into the logs). */
const ACCEPTED_ID = /^[A-Za-z0-9._:-]{1,128}$/;

/** Paths that probes and scrapers call every few seconds: their lines are written at debug only. */
const PROBES = new Set(['/healthz', '/readyz', '/metrics']);

interface RoutedRequest extends IncomingMessage {
  /** Express: the route that matched, and the mount path before it. */
  route?: { path?: unknown };
  baseUrl?: string;
  originalUrl?: string;
  /** Set by the auth guard. */
  principal?: { id: number };
}

/** The request id: the client's `X-Request-Id` when acceptable, else a new UUID; returned in the answer's header. */
export function requestIdOf(req: IncomingMessage, res: ServerResponse): string {
  const given = req.headers['x-request-id'];
  const id = typeof given === 'string' && ACCEPTED_ID.test(given) ? given : randomUUID();
  res.setHeader('X-Request-Id', id);
  return id;
}

/**
 * The route pattern that served the request (`/api/desks/:deskId`), or the bare path (no query, at most 200
 * characters) when no controller's route did: the screens, and paths nothing serves (a catch-all pattern such as
 * `{/*splat}` says nothing).
 */
export function routeOf(req: IncomingMessage): string {
  const r = req as RoutedRequest;
  const pattern = r.route?.path;
  if (typeof pattern === 'string' && !pattern.includes('*')) return `${r.baseUrl ?? ''}${pattern}`;
  return (r.originalUrl ?? req.url ?? '').split('?')[0].slice(0, 200);
}

/** The fields of a request's line: never a body, a query string or a text. */
function requestFields(req: IncomingMessage, res: ServerResponse, durationMs: unknown): Record<string, unknown> {
  return {
    method: req.method,
    route: routeOf(req),
    status: res.statusCode,
    durationMs,
    userId: (req as RoutedRequest).principal?.id ?? null,
  };
}

/** pino-http options for one line per HTTP request, written when the answer is finished (or the client went away). */
export function requestLogOptions(): Options {
  return {
    genReqId: requestIdOf,
    customAttributeKeys: { reqId: 'requestId', responseTime: 'durationMs' },
    // Only the request id is bound to the lines written while a request runs; the request itself is never serialised.
    quietReqLogger: true,
    quietResLogger: true,
    customLogLevel: (req, res, err) => {
      if (err !== undefined || res.statusCode >= 500) return 'error';
      return PROBES.has(routeOf(req)) ? 'debug' : 'info';
    },
    customSuccessObject: (req, res, value: { durationMs?: unknown }) => requestFields(req, res, value.durationMs),
    customErrorObject: (req, res, _err, value: { durationMs?: unknown }) => requestFields(req, res, value.durationMs),
    customSuccessMessage: (req, res, ms) => `${req.method ?? ''} ${routeOf(req)} ${res.statusCode} ${ms} ms`,
    customErrorMessage: (req, res) => `${req.method ?? ''} ${routeOf(req)} ${res.statusCode}`,
  };
}

/** The Express middleware that writes one line per request through `root` and sets `req.log`. */
export function requestLogger(root: Logger): HttpLogger {
  return pinoHttp({ logger: root, ...requestLogOptions() });
}

import { timingSafeEqual } from 'node:crypto';
import { createServer, type Server } from 'node:http';
import type { INestApplication } from '@nestjs/common';
import type express from 'express';
import type { AppConfig } from '#config';
import { AuthService, bearerOf, readCookie, SESSION_COOKIE } from '#auth';
import { routeOf } from '#logging';
import { ServiceMetrics } from './service-metrics.js';

const sameSecret = (a: string, b: string) =>
  a.length === b.length && timingSafeEqual(Buffer.from(a, 'utf8'), Buffer.from(b, 'utf8'));

async function answer(metrics: ServiceMetrics, res: express.Response | import('node:http').ServerResponse) {
  try {
    const text = await metrics.registry.metrics();
    res.writeHead(200, { 'Content-Type': metrics.registry.contentType, 'Cache-Control': 'no-store' });
    res.end(text);
  } catch (e) {
    // A dependency that does not answer (the database, Redis) makes the scrape fail visibly, never report zeros.
    res.writeHead(503, { 'Content-Type': 'text/plain; charset=utf-8' });
    res.end(`metrics unavailable: ${(e as Error).message}\n`);
  }
}

/**
 * Counts every answered request, and serves `GET /metrics`: on METRICS_PORT when set (a separate server, no
 * authentication: bind it where only the scraper reaches), else on the API's port to a request bearing
 * METRICS_TOKEN, or, without a token, to an admin. Returns the separate server, if any, for closing.
 */
export function mountMetrics(app: INestApplication, config: AppConfig): Server | null {
  const metrics = app.get(ServiceMetrics);
  app.use((req: express.Request, res: express.Response, next: express.NextFunction) => {
    const started = process.hrtime.bigint();
    res.once('finish', () =>
      metrics.observe(req.method, routeOf(req), res.statusCode, Number(process.hrtime.bigint() - started) / 1e9),
    );
    next();
  });
  if (config.metrics.port !== null) {
    const server = createServer((req, res) => {
      if (req.method === 'GET' && (req.url ?? '').split('?')[0] === '/metrics') void answer(metrics, res);
      else {
        res.writeHead(404, { 'Content-Type': 'text/plain; charset=utf-8' });
        res.end('only GET /metrics is served here\n');
      }
    });
    server.listen(config.metrics.port, config.host);
    app.use('/metrics', (_req: express.Request, res: express.Response) => {
      res.status(404).json({ statusCode: 404, message: `metrics are served on port ${config.metrics.port}` });
    });
    return server;
  }
  const auth = app.get(AuthService);
  const token = config.metrics.token;
  app.use('/metrics', (req: express.Request, res: express.Response, next: express.NextFunction) => {
    if (req.method !== 'GET') {
      next();
      return;
    }
    const bearer = bearerOf(req.headers.authorization);
    if (token !== null) {
      if (bearer && sameSecret(bearer, token)) {
        void answer(metrics, res);
        return;
      }
      res.status(401).json({ statusCode: 401, message: 'send METRICS_TOKEN as Authorization: Bearer …' });
      return;
    }
    const secret = bearer ?? readCookie(req.headers.cookie, SESSION_COOKIE);
    void (secret ? auth.authenticate(secret) : Promise.resolve(null)).then((principal) => {
      if (principal?.role === 'admin') return answer(metrics, res);
      res.status(principal ? 403 : 401).json({
        statusCode: principal ? 403 : 401,
        message: 'metrics: an admin, or set METRICS_TOKEN or METRICS_PORT',
      });
    }, next);
  });
  return null;
}

import { type INestApplication } from '@nestjs/common';
import { NestFactory, Reflector } from '@nestjs/core';
import { SwaggerModule } from '@nestjs/swagger';
import { buildOpenApiDocument } from '#api-docs';
import type { NestExpressApplication } from '@nestjs/platform-express';
import express from 'express';
import type { AppConfig } from '#config';
import { NestPinoLogger, requestLogger, ROOT_LOGGER } from '#logging';
import { AuthService, bearerOf, readCookie, SESSION_COOKIE } from '#auth';
import { ApiModule } from './app.module.js';
import { JsonBodyInterceptor } from './json-body.js';
import { mountMetrics } from './metrics/metrics-endpoint.js';
import { ErrorAnswerFilter } from './error-answer.filter.js';
import { StrictValidationPipe } from './strict-validation.pipe.js';
import { webScreens } from './web-screens.js';

/** The API's version in its document. */
export const API_VERSION = '0.1.0';

/** Builds the HTTP application (not listening yet). Used by `main.ts` and by the tests. */
export async function createHttpApp(config: AppConfig): Promise<INestApplication> {
  const app = await NestFactory.create<NestExpressApplication>(ApiModule.forRoot(config), {
    bodyParser: false,
    // Nest's messages wait for the process's logger (LOG_LEVEL, LOG_FORMAT), which also writes a line per request.
    bufferLogs: true,
  });
  app.useLogger(app.get(NestPinoLogger));
  app.use(requestLogger(app.get(ROOT_LOGGER)));
  const metricsServer = mountMetrics(app, config);
  if (metricsServer) {
    const close = app.close.bind(app);
    app.close = async () => {
      await new Promise<void>((resolve) => metricsServer.close(() => resolve()));
      await close();
    };
  }
  app.disable('x-powered-by');
  app.use((_req: express.Request, res: express.Response, next: express.NextFunction) => {
    res.setHeader('X-Content-Type-Options', 'nosniff');
    res.setHeader('Referrer-Policy', 'no-referrer');
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  // Bodies are read after the guard (see JsonBodyInterceptor) and checked for unknown properties before validation walks them.
  app.useGlobalInterceptors(new JsonBodyInterceptor(app.get(Reflector)));
  app.useGlobalPipes(new StrictValidationPipe());
  app.useGlobalFilters(new ErrorAnswerFilter(app.getHttpAdapter()));
  app.enableShutdownHooks();
  const doc = buildOpenApiDocument(app, API_VERSION);
  // The document is for signed-in users only; Nest's guard does not cover these routes, so check here. Mounted on
  // the document's own paths, so Express matches them exactly as it matches the document's routes (case-insensitive,
  // trailing slash or not): a path that reaches the document has passed this check first.
  const auth = app.get(AuthService);
  app.use(
    ['/api/docs', '/api/docs-json'],
    (req: express.Request, res: express.Response, next: express.NextFunction) => {
      const secret = bearerOf(req.headers.authorization) ?? readCookie(req.headers.cookie, SESSION_COOKIE);
      void (secret ? auth.authenticate(secret) : Promise.resolve(null)).then(
        (principal) =>
          principal
            ? next()
            : res
                .status(401)
                .json({ statusCode: 401, message: 'sign in first (session cookie or Authorization: Bearer token)' }),
        next,
      );
    },
  );
  SwaggerModule.setup('api/docs', app, doc, { jsonDocumentUrl: 'api/docs-json', raw: ['json'] });
  app.use(webScreens());
  return app;
}

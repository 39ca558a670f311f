import { ValidationPipe, type INestApplication } from '@nestjs/common';
import { NestFactory } from '@nestjs/core';
import { DocumentBuilder, SwaggerModule } from '@nestjs/swagger';
import type { NestExpressApplication } from '@nestjs/platform-express';
import express from 'express';
import { nestLogLevels, type AppConfig } from '#config';
import { AuthService, readCookie, SESSION_COOKIE } from '#auth';
import { ApiModule } from './app.module.js';
import { webScreens } from './web-screens.js';

/** Paths whose bodies are streamed by their handler, never parsed into memory. */
const STREAMED_BODY = /^\/api\/desks\/[^/]+\/imports\/?$/;

/** Builds the HTTP application (not listening yet). Used by `main.ts` and by the tests. */
export async function createHttpApp(config: AppConfig): Promise<INestApplication> {
  const app = await NestFactory.create<NestExpressApplication>(ApiModule.forRoot(config), {
    bodyParser: false,
    logger: nestLogLevels(config.logLevel),
  });
  const json = express.json({ limit: '1mb' });
  app.use((req: express.Request, res: express.Response, next: express.NextFunction) =>
    STREAMED_BODY.test(req.path) ? next() : json(req, res, next),
  );
  app.disable('x-powered-by');
  app.use((_req: express.Request, res: express.Response, next: express.NextFunction) => {
    res.setHeader('X-Content-Type-Options', 'nosniff');
    res.setHeader('Referrer-Policy', 'no-referrer');
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  app.useGlobalPipes(
    new ValidationPipe({ whitelist: true, forbidNonWhitelisted: true, transform: true, stopAtFirstError: false }),
  );
  app.enableShutdownHooks();
  const doc = SwaggerModule.createDocument(
    app,
    new DocumentBuilder()
      .setTitle('Cribra API')
      .setDescription(
        'Triage queue with active learning and split-conformal prediction sets. Authenticate with the session cookie or `Authorization: Bearer <token>`.',
      )
      .setVersion('0.1.0')
      .addBearerAuth()
      .addCookieAuth('cribra_session')
      .build(),
  );
  // The document is for signed-in users only; Nest's guard does not cover these routes, so check here.
  const auth = app.get(AuthService);
  app.use(async (req: express.Request, res: express.Response, next: express.NextFunction) => {
    if (!req.path.startsWith('/api/docs')) {
      next();
      return;
    }
    const authz = req.headers.authorization;
    const secret =
      authz && /^Bearer\s+/i.test(authz)
        ? authz.replace(/^Bearer\s+/i, '').trim()
        : readCookie(req.headers.cookie, SESSION_COOKIE);
    if (secret && (await auth.authenticate(secret))) {
      next();
      return;
    }
    res.status(401).json({ statusCode: 401, message: 'sign in first (session cookie or Authorization: Bearer token)' });
  });
  SwaggerModule.setup('api/docs', app, doc, { jsonDocumentUrl: 'api/docs-json', raw: ['json'] });
  app.use(webScreens());
  return app;
}

import 'reflect-metadata';
import { writeFileSync } from 'node:fs';
import { NestFactory } from '@nestjs/core';
import { buildOpenApiDocument } from '#api-docs';
import { parseConfig } from '#config';
import { ApiModule } from './app.module.js';
import { API_VERSION } from './http-app.js';

/**
 * `node dist/apps/api/src/write-openapi.js FILE`: writes the API document as JSON, for the web client's generated
 * types (`npm run build`). The application is created in Nest's preview mode: routes and their decorators are read,
 * nothing is connected (no database, no Redis), so the build needs neither.
 */
async function main(file: string | undefined): Promise<void> {
  if (!file) throw new Error('usage: write-openapi.js FILE');
  const app = await NestFactory.create(ApiModule.forRoot(parseConfig({})), { preview: true, logger: false });
  writeFileSync(file, `${JSON.stringify(buildOpenApiDocument(app, API_VERSION), null, 2)}\n`);
  await app.close();
}

await main(process.argv[2]);

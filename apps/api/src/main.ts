import 'reflect-metadata';
import { Logger } from '@nestjs/common';
import { loadConfigOrExit } from '#config';
import { createHttpApp } from './http-app.js';

async function main(): Promise<void> {
  const config = loadConfigOrExit();
  const app = await createHttpApp(config);
  await app.listen(config.port, config.host);
  new Logger('Api').log(`listening on http://${config.host}:${config.port} (API document at /api/docs)`);
}

await main();

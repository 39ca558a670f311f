import 'reflect-metadata';
import { Logger } from '@nestjs/common';
import { ConfigError, loadConfig } from '#config';
import { createHttpApp } from './http-app.js';

async function main(): Promise<void> {
  let config;
  try {
    config = loadConfig();
  } catch (e) {
    if (e instanceof ConfigError) {
      process.stderr.write(`${e.message}\n`);
      process.exit(2);
    }
    throw e;
  }
  const app = await createHttpApp(config);
  await app.listen(config.port, config.host);
  new Logger('Api').log(`listening on http://${config.host}:${config.port} (API document at /api/docs)`);
}

await main();

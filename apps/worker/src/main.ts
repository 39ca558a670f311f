import 'reflect-metadata';
import { Logger } from '@nestjs/common';
import { NestFactory } from '@nestjs/core';
import { loadConfigOrExit } from '#config';
import { NestPinoLogger } from '#logging';
import { WorkerModule } from './worker.module.js';

async function main(): Promise<void> {
  const config = loadConfigOrExit();
  const app = await NestFactory.createApplicationContext(WorkerModule.forRoot(config), {
    bufferLogs: true,
  });
  app.useLogger(app.get(NestPinoLogger));
  const logger = new Logger('Worker');
  let closing = false;
  const stop = async (signal: string) => {
    if (closing) return;
    closing = true;
    logger.log(`${signal}: finishing current jobs, then stopping`);
    await app.close();
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
  logger.log('worker started');
}

await main();

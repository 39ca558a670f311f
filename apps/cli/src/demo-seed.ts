import 'reflect-metadata';
import { Module } from '@nestjs/common';
import { NestFactory } from '@nestjs/core';
import { AuditModule } from '#audit';
import { ConfigModule, type AppConfig } from '#config';
import { DatabaseModule } from '#database';
import { DemoSeeder, DemoSeedModule, type DemoSeedResult } from '#demo';
import { QueuesModule } from '#queues';

/**
 * Seeds the Mossbank Commons demo when DEMO is on and the database has no
 * users and no desks (see {@link DemoSeeder}); null when it did nothing. Needs
 * the migrations run and Redis up: the import is enqueued for the worker.
 */
export async function seedDemo(config: AppConfig): Promise<DemoSeedResult | null> {
  if (!config.demo) return null;
  @Module({
    imports: [
      ConfigModule.forRoot(config),
      DatabaseModule.forRoot(),
      QueuesModule.forRoot(),
      AuditModule,
      DemoSeedModule,
    ],
  })
  class DemoSeedCliModule {}
  const app = await NestFactory.createApplicationContext(DemoSeedCliModule, { logger: ['error'] });
  try {
    return await app.get(DemoSeeder).seedIfEmpty();
  } finally {
    await app.close();
  }
}

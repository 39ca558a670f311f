import { loadConfigOrExit } from '#config';
import { defineCommand, defineGroup, numberOption } from './cli-command.js';
import { NotFound } from '#errors';

/** `retention run`: applies the retention periods now, as the daily job does; prints one JSON line. */
export const retentionRunCommand = defineCommand({
  name: 'retention run',
  summary: 'erase the items past their desk’s retention periods now (or count them)',
  description:
    'Applies each desk’s retention periods now, as the worker’s daily run does, and prints ' +
    '{"dryRun","desks":[{deskId, items, byCategory, unlabelled, open, …}]} on one line. Erased items leave ' +
    'tombstones; each batch is recorded as an erasure by retention in the audit trail. Needs the database only.',
  options: {
    desk: { type: 'string', value: 'ID', description: 'only this desk', defaultText: 'every desk' },
    'dry-run': { type: 'boolean', description: 'only count what would be erased; erase nothing' },
  },
  async run({ values }, io) {
    const deskId =
      values.desk === undefined ? undefined : numberOption('desk', values.desk, 0, { integer: true, min: 1 });
    const dryRun = values['dry-run'] === true;
    const config = loadConfigOrExit();
    // Loaded here so that `--help` does not start Nest.
    await import('reflect-metadata');
    const { Module } = await import('@nestjs/common');
    const { NestFactory } = await import('@nestjs/core');
    const { AuditModule } = await import('#audit');
    const { ConfigModule } = await import('#config');
    const { DatabaseModule } = await import('#database');
    const { RetentionCoreModule, RetentionService } = await import('#retention');
    @Module({ imports: [ConfigModule.forRoot(config), DatabaseModule.forRoot(), AuditModule, RetentionCoreModule] })
    class RetentionCliModule {}
    const app = await NestFactory.createApplicationContext(RetentionCliModule, { logger: ['error'] });
    try {
      const runs = await app.get(RetentionService).runAll({ id: null, name: 'cli' }, { deskId, dryRun });
      io.stdout.write(`${JSON.stringify({ dryRun, desks: runs })}\n`);
      return 0;
    } catch (e) {
      if (e instanceof NotFound) {
        io.stderr.write(`${e.message}\n`);
        return 1;
      }
      throw e;
    } finally {
      await app.close();
    }
  },
});

/** `retention …`: retention periods. */
export const retentionCommands = defineGroup({
  name: 'retention',
  summary: 'apply the desks’ retention periods',
  commands: [retentionRunCommand],
});

import { loadConfigOrExit } from '#config';
import { openDatabase, withMigrationLock } from '#database';
import { defineCommand } from './cli-command.js';

/** `migrate [--revert]`: brings the schema up to date, or reverts the last migration. */
export const migrateCommand = defineCommand({
  name: 'migrate',
  summary: 'bring the database schema up to date (or revert the last migration)',
  description:
    'Runs the pending migrations and prints {"database","pending"} on one line (pending: false when up to date). ' +
    '`start` runs them too; this command is for upgrades done by hand. Migrations run under a lock (PostgreSQL: an ' +
    'advisory lock; SQLite: the write lock): while another process migrates, this one says so and waits.',
  options: {
    revert: { type: 'boolean', description: 'undo the most recent migration instead (its down step)' },
  },
  async run({ values }, io) {
    const revert = values.revert === true;
    const ds = await openDatabase(loadConfigOrExit().database, {
      migrate: !revert,
      onWait: (message) => io.stderr.write(`${message}\n`),
    });
    try {
      if (revert)
        await withMigrationLock(
          ds,
          () => ds.undoLastMigration({ transaction: 'each' }),
          (message) => io.stderr.write(`${message}\n`),
        );
      const pending = await ds.showMigrations();
      io.stdout.write(`${JSON.stringify({ database: ds.options.type, pending })}\n`);
      return 0;
    } finally {
      await ds.destroy();
    }
  },
});

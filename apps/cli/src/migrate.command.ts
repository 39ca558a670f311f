import { loadConfigOrExit } from '#config';
import { openDatabase } from '#database';

/** `migrate [--revert]`: brings the schema up to date, or reverts the last migration. */
export async function migrateCommand(argv: string[]): Promise<number> {
  const revert = argv.includes('--revert');
  const unknown = argv.filter((a) => a !== '--revert');
  if (unknown.length) {
    process.stderr.write(`unknown argument ${unknown[0]}\nusage: cribra migrate [--revert]\n`);
    return 2;
  }
  const ds = await openDatabase(loadConfigOrExit().database, { migrate: !revert });
  try {
    if (revert) await ds.undoLastMigration({ transaction: 'each' });
    const pending = await ds.showMigrations();
    process.stdout.write(`${JSON.stringify({ database: ds.options.type, pending })}\n`);
    return 0;
  } finally {
    await ds.destroy();
  }
}

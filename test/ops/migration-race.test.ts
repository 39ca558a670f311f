import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import BetterSqlite3 from 'better-sqlite3';
import pg from 'pg';
import { afterAll, describe, expect, it } from 'vitest';
import { MIGRATION_LOCK_KEY, MIGRATION_WAIT_MESSAGE, MIGRATIONS, openDatabase } from '#database';
import { createTestDatabase, DATABASE_KINDS, type TestDatabase } from '../support/databases.js';
import { built } from '../support/processes.js';

/** `cribra migrate` as its own process; resolves with its exit code and output, and says when it starts waiting. */
function migrate(env: Record<string, string>) {
  const child = spawn(process.execPath, [built('apps/cli/src/main.js'), 'migrate'], {
    env: { PATH: process.env.PATH ?? '', TZ: 'UTC', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let stdout = '';
  let stderr = '';
  let sawWait!: () => void;
  const waiting = new Promise<void>((r) => (sawWait = r));
  child.stdout.on('data', (d: Buffer) => (stdout += d.toString('utf8')));
  child.stderr.on('data', (d: Buffer) => {
    stderr += d.toString('utf8');
    if (stderr.includes(MIGRATION_WAIT_MESSAGE)) sawWait();
  });
  const done = new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) =>
    child.once('exit', (code) => resolve({ code, stdout, stderr })),
  );
  return { waiting, done };
}

/** Holds the database's migration lock from outside, as a process in the middle of migrating would. */
async function holdLock(tdb: TestDatabase): Promise<() => Promise<void>> {
  if (tdb.config.kind === 'sqlite') {
    const conn = new BetterSqlite3(tdb.config.file);
    conn.exec('BEGIN IMMEDIATE');
    return async () => {
      conn.exec('COMMIT');
      conn.close();
    };
  }
  const client = new pg.Client({ connectionString: tdb.config.url });
  await client.connect();
  await client.query('SELECT pg_advisory_lock($1)', [MIGRATION_LOCK_KEY]);
  return async () => {
    await client.query('SELECT pg_advisory_unlock($1)', [MIGRATION_LOCK_KEY]);
    await client.end();
  };
}

describe.each(DATABASE_KINDS)('two processes starting at once on a pending migration, %s', (kind) => {
  const cleanup: Array<() => Promise<void> | void> = [];
  afterAll(async () => {
    for (const c of cleanup.reverse()) await c();
  });

  it('one migrates, the other waits for it and finds nothing pending; each migration is applied once', async () => {
    const tdb = await createTestDatabase(kind);
    cleanup.push(() => tdb.drop());
    const dataDir = mkdtempSync(join(tmpdir(), 'cribra-migrate-'));
    cleanup.push(() => rmSync(dataDir, { recursive: true, force: true }));
    // An upgrade: the database is at the previous version, the newest migration is pending.
    const ds = await openDatabase(tdb.config);
    await ds.undoLastMigration({ transaction: 'each' });
    await ds.destroy();

    // Hold the lock while both start, so that both meet it and then race for it the moment it is released.
    const release = await holdLock(tdb);
    const env = { DATA_DIR: dataDir, DATABASE_URL: tdb.config.url };
    const runs = [migrate(env), migrate(env)];
    await Promise.all(runs.map((r) => r.waiting));
    await release();
    const results = await Promise.all(runs.map((r) => r.done));
    for (const r of results) {
      expect(r.code, r.stderr).toBe(0);
      expect(JSON.parse(r.stdout.trim())).toMatchObject({ pending: false });
    }

    const check = await openDatabase(tdb.config, { migrate: false });
    try {
      const rows = await check.query<Array<{ name: string }>>('SELECT name FROM migrations');
      const names = rows.map((r) => r.name);
      expect(names).toHaveLength(MIGRATIONS.length);
      expect(new Set(names).size).toBe(MIGRATIONS.length);
      expect(await check.showMigrations()).toBe(false);
    } finally {
      await check.destroy();
    }
  });
});

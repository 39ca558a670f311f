import type { DataSource, QueryRunner } from 'typeorm';

/**
 * PostgreSQL advisory lock key of the migrations (one per database; advisory locks are per database). The bytes of
 * "crib" as an integer: any fixed number works, as long as nothing else in the database uses it.
 */
export const MIGRATION_LOCK_KEY = 0x63726962;

/** Longest a process waits for another one's migrations before it gives up (SQLite; PostgreSQL waits on its lock). */
const SQLITE_WAIT_MS = 30 * 60_000;

/** What a process says when it has to wait for another process's migrations. */
export const MIGRATION_WAIT_MESSAGE = 'another process is migrating the database; waiting for it to finish';

/**
 * Runs `fn` (the migrations, or reverting one) while holding the database's migration lock, so that of several
 * processes started at once on a pending migration (the API and workers after an upgrade, `cribra migrate` run twice)
 * one migrates and the others wait, then find nothing pending.
 *
 * - PostgreSQL: a session-level advisory lock (`pg_advisory_lock`) on a connection of its own, held until `fn` ends;
 *   the migrations run on other connections of the pool.
 * - SQLite: the file's write lock, taken up front with `BEGIN IMMEDIATE` on the process's one connection; `fn` runs
 *   inside that transaction (TypeORM then starts no transaction of its own) and it commits at the end, so all pending
 *   migrations apply as one. A waiting process retries `BEGIN IMMEDIATE` (each try waits the connection's busy
 *   timeout) for up to 30 minutes.
 *
 * `onWait` is called once when the lock is held by someone else.
 */
export async function withMigrationLock<T>(
  ds: DataSource,
  fn: () => Promise<T>,
  onWait: (message: string) => void,
): Promise<T> {
  return ds.options.type === 'postgres' ? withAdvisoryLock(ds, fn, onWait) : withSqliteWriteLock(ds, fn, onWait);
}

async function withAdvisoryLock<T>(
  ds: DataSource,
  fn: () => Promise<T>,
  onWait: (message: string) => void,
): Promise<T> {
  const lock = ds.createQueryRunner();
  await lock.connect();
  try {
    const [{ locked }] = (await lock.query('SELECT pg_try_advisory_lock($1) AS locked', [
      MIGRATION_LOCK_KEY,
    ])) as Array<{
      locked: boolean;
    }>;
    if (!locked) {
      onWait(MIGRATION_WAIT_MESSAGE);
      await lock.query('SELECT pg_advisory_lock($1)', [MIGRATION_LOCK_KEY]);
    }
    try {
      return await fn();
    } finally {
      await lock.query('SELECT pg_advisory_unlock($1)', [MIGRATION_LOCK_KEY]);
    }
  } finally {
    await lock.release();
  }
}

async function withSqliteWriteLock<T>(
  ds: DataSource,
  fn: () => Promise<T>,
  onWait: (message: string) => void,
): Promise<T> {
  // better-sqlite3: one connection per process, and TypeORM hands out the same query runner every time.
  const qr: QueryRunner = ds.createQueryRunner();
  const deadline = Date.now() + SQLITE_WAIT_MS;
  // The first try must not wait (so that a waiting process says so at once); later ones wait the busy timeout.
  const [{ timeout }] = (await qr.query('PRAGMA busy_timeout')) as Array<{ timeout: number }>;
  await qr.query('PRAGMA busy_timeout = 0');
  try {
    for (let told = false; ;) {
      try {
        await qr.query('BEGIN IMMEDIATE');
        break;
      } catch (e) {
        if (!/SQLITE_BUSY|database is locked/i.test(String(e)) || Date.now() > deadline) throw e;
        if (!told) {
          told = true;
          onWait(MIGRATION_WAIT_MESSAGE);
          await qr.query(`PRAGMA busy_timeout = ${timeout}`);
        }
      }
    }
  } finally {
    await qr.query(`PRAGMA busy_timeout = ${timeout}`);
  }
  // Mark the runner's transaction as open, as Database.write does: TypeORM then runs each migration inside it.
  const state = qr as unknown as { isTransactionActive: boolean; transactionDepth: number };
  state.isTransactionActive = true;
  state.transactionDepth = 1;
  try {
    const result = await fn();
    await qr.commitTransaction();
    return result;
  } catch (e) {
    await qr.rollbackTransaction();
    throw e;
  }
}

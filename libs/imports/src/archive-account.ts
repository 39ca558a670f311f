import type { EntityManager } from 'typeorm';
import { ARCHIVE_ACCOUNT, type Database, type DbInt } from '#database';

/** An account of a person holds the name the system account needs. */
export class ArchiveAccountTaken extends Error {
  constructor() {
    super(
      `an account named '${ARCHIVE_ACCOUNT}' exists: that name belongs to the system account that holds imported ` +
        'labels; an admin must rename or remove that account before a labelled import',
    );
  }
}

/**
 * The system account that gives an archive's labels, made by the first labelled import (in its transaction):
 * `is_system`, disabled, no password, so it never signs in; the accounts service neither lists nor changes it and a
 * desk never enrols it.
 *
 * @throws ArchiveAccountTaken when a person's account has the name.
 */
export async function ensureArchiveAccount(db: Database, m: EntityManager): Promise<{ id: number; name: string }> {
  const find = () =>
    db.queryOne<{ id: DbInt; is_system: boolean | number }>(m, 'SELECT id, is_system FROM users WHERE name = $1', [
      ARCHIVE_ACCOUNT,
    ]);
  let row = await find();
  if (!row) {
    // Two first imports at once: the second finds the first's row once it commits.
    await db.query(
      m,
      `INSERT INTO users (name, role, password_hash, disabled, is_system, created_at)
       VALUES ($1, 'reviewer', NULL, $2, $2, $3) ON CONFLICT DO NOTHING`,
      [ARCHIVE_ACCOUNT, true, db.time(new Date())],
    );
    row = await find();
  }
  if (!row || !Number(row.is_system)) throw new ArchiveAccountTaken();
  return { id: Number(row.id), name: ARCHIVE_ACCOUNT };
}

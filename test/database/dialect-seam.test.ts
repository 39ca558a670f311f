import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Database, IN_LIST_MAX, inListChunks, openDatabase, type DbBool, type DbInt } from '#database';
import { createTestDatabase, DATABASE_KINDS, type TestDatabase } from '../support/databases.js';

/** The dialect seam of `Database`: one SQL text per statement, the same answers on both databases. */
describe.each(DATABASE_KINDS)('the dialect seam on %s', (kind) => {
  let tdb: TestDatabase;
  let db: Database;

  beforeAll(async () => {
    tdb = await createTestDatabase(kind);
    db = new Database(await openDatabase(tdb.config));
    const at = db.time(new Date('2026-03-01T12:00:00.000Z'));
    await db.write(async (m) => {
      for (const [name, disabled] of [
        ['ana', false],
        ['ben', true],
        ['cy', false],
      ] as const)
        await db.query(m, 'INSERT INTO users (name, role, disabled, created_at) VALUES ($1, $2, $3, $4)', [
          name,
          'reviewer',
          disabled,
          at,
        ]);
    });
  });
  afterAll(async () => {
    await (db as Database | undefined)?.close();
    await (tdb as TestDatabase | undefined)?.drop();
  });

  it('reads booleans as booleans', async () => {
    const rows = await db.query<{ name: string; disabled: DbBool }>(
      null,
      'SELECT name, disabled FROM users ORDER BY name',
    );
    expect(rows.map((r) => [r.name, db.bool(r.disabled)])).toEqual([
      ['ana', false],
      ['ben', true],
      ['cy', false],
    ]);
  });

  it('numbers IN lists after the other parameters', async () => {
    const names = ['cy', 'ana', 'nobody'];
    const rows = await db.query<{ name: string }>(
      null,
      `SELECT name FROM users WHERE role = $1 AND name IN (${db.inList(names.length, 2)}) ORDER BY name`,
      ['reviewer', ...names],
    );
    expect(rows.map((r) => r.name)).toEqual(['ana', 'cy']);
    expect(() => db.inList(0)).toThrow(RangeError);
    expect(() => db.inList(IN_LIST_MAX + 1)).toThrow(RangeError);
    expect(inListChunks([1, 2, 3, 4, 5], 2)).toEqual([[1, 2], [3, 4], [5]]);
  });

  it('compares and reads back times', async () => {
    const rows = await db.query<{ n: DbInt; at: unknown }>(
      null,
      'SELECT COUNT(*) AS n, MAX(created_at) AS at FROM users WHERE created_at > $1 AND created_at < $2',
      [db.time(new Date('2026-03-01T11:59:59.999Z')), db.time(new Date('2026-03-01T12:00:00.001Z'))],
    );
    expect(Number(rows[0].n)).toBe(3);
    expect(db.parseTime(rows[0].at)?.toISOString()).toBe('2026-03-01T12:00:00.000Z');
  });

  it('locks the rows a transaction reads until it ends', async () => {
    const lock = db.lockRows({ skipLocked: true });
    expect(lock).toBe(kind === 'postgres' ? ' FOR UPDATE SKIP LOCKED' : '');
    expect(db.lockRows({ of: 'u' })).toBe(kind === 'postgres' ? ' FOR UPDATE OF u' : '');
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    let locked!: () => void;
    const taken = new Promise<void>((r) => (locked = r));
    const first = db.write(async (m) => {
      await db.query(m, `SELECT u.id FROM users u WHERE u.name = $1${db.lockRows({ of: 'u' })}`, ['ana']);
      locked();
      await held;
    });
    await taken;
    if (kind === 'postgres') {
      // Another transaction skips the held row and still sees the others.
      const seen = await db.write((m) => db.query<{ name: string }>(m, `SELECT name FROM users ORDER BY name${lock}`));
      expect(seen.map((r) => r.name)).toEqual(['ben', 'cy']);
      release();
      await first;
    } else {
      // SQLite: the whole write transaction is the lock; a second one waits for the first to end.
      let secondRan = false;
      const second = db.write(async (m) => {
        secondRan = true;
        return db.query<{ name: string }>(m, `SELECT name FROM users ORDER BY name${lock}`);
      });
      await new Promise((r) => setImmediate(r));
      expect(secondRan).toBe(false);
      release();
      await first;
      expect((await second).map((r) => r.name)).toEqual(['ana', 'ben', 'cy']);
    }
  });

  it('takes the weaker no-key lock: a second locker waits, a row that refers to the locked one goes in', async () => {
    expect(db.lockRows({ noKey: true })).toBe(kind === 'postgres' ? ' FOR NO KEY UPDATE' : '');
    if (kind === 'sqlite') return; // the write transaction is the lock (above)
    await db.query(null, 'CREATE TABLE seam_parent (id integer PRIMARY KEY)');
    await db.query(
      null,
      'CREATE TABLE seam_child (id integer PRIMARY KEY, parent_id integer NOT NULL REFERENCES seam_parent (id))',
    );
    await db.query(null, 'INSERT INTO seam_parent (id) VALUES (1)');
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    let locked!: () => void;
    const taken = new Promise<void>((r) => (locked = r));
    const first = db.write(async (m) => {
      await db.query(m, `SELECT id FROM seam_parent WHERE id = 1${db.lockRows({ noKey: true })}`);
      locked();
      await held;
    });
    await taken;
    // A child row goes in while the parent is locked: its foreign-key check takes only a key-share lock.
    await db.write((m) => db.query(m, 'INSERT INTO seam_child (id, parent_id) VALUES (1, 1)'));
    // A second no-key locker waits for the first.
    let secondLocked = false;
    const second = db.write(async (m) => {
      await db.query(m, `SELECT id FROM seam_parent WHERE id = 1${db.lockRows({ noKey: true })}`);
      secondLocked = true;
    });
    await new Promise((r) => setTimeout(r, 200));
    expect(secondLocked).toBe(false);
    release();
    await first;
    await second;
    expect(secondLocked).toBe(true);
  });

  it('inserts rows in bulk, skipping those that collide', async () => {
    await db.query(
      null,
      'CREATE TABLE seam_rows (id integer PRIMARY KEY, label text NOT NULL, weight double precision)',
    );
    const columns = [
      { name: 'id', pgType: 'integer' },
      { name: 'label', pgType: 'text' },
      { name: 'weight', pgType: 'double precision' },
    ] as const;
    await db.write((m) => db.insertRows(m, 'seam_rows', columns, [[1, 'one', 0.5]]));
    await db.write((m) =>
      db.insertRows(m, 'seam_rows', columns, [
        [2, 'two', 0.25],
        [1, 'again', 1],
        [3, 'three', null],
      ]),
    );
    const rows = await db.query<{ id: DbInt; label: string; weight: number | null }>(
      null,
      'SELECT id, label, weight FROM seam_rows ORDER BY id',
    );
    expect(rows.map((r) => [Number(r.id), r.label, r.weight])).toEqual([
      [1, 'one', 0.5],
      [2, 'two', 0.25],
      [3, 'three', null],
    ]);
  });
});

import type { DataSource, EntityManager } from 'typeorm';
import type { Dialect } from './dialect.js';
import { Mutex } from './mutex.js';

/** A column of {@link Database.insertRows}: its name and its PostgreSQL type (for the array it is sent as). */
export interface InsertColumn {
  name: string;
  pgType: 'integer' | 'double precision' | 'text' | 'bytea';
}

/**
 * An integer column of a row read by {@link Database.query}, as the drivers hand it over: PostgreSQL's `pg` gives
 * `integer` as a number but `bigint`, `COUNT(*)` and `SUM(…)` as text (they may not fit a double), better-sqlite3
 * a number. Row types say so, and readers convert with `Number(…)`, so that an aggregate or a wider column cannot
 * turn arithmetic into string concatenation.
 */
export type DbInt = number | string;

/** A boolean column of a row read by {@link Database.query}: `pg` gives a boolean, better-sqlite3 0 or 1. Read it with {@link Database.bool}. */
export type DbBool = boolean | number;

/** How {@link Database.lockRows} locks the rows a `SELECT` reads. */
export interface RowLock {
  /** Lock only the rows of this table alias (PostgreSQL `FOR UPDATE OF alias`), not those of every joined table. */
  of?: string;
  /** Leave rows another transaction holds out of the answer instead of waiting for them. */
  skipLocked?: boolean;
  /**
   * PostgreSQL's weaker `FOR NO KEY UPDATE`: it still serialises the transactions that take it, but does not hold up
   * inserts of rows that refer to the locked one (their foreign-key checks take `FOR KEY SHARE`).
   */
  noKey?: boolean;
}

/**
 * The most values one `IN (…)` list of {@link Database.inList} may hold: SQLite allows 32 766 parameters a statement
 * (since 3.32), PostgreSQL 65 535; this leaves room for the statement's other parameters. Long lists are better split
 * far below it with {@link inListChunks}.
 */
export const IN_LIST_MAX = 30_000;

/** Splits `values` into lists of at most `size` values each, for one {@link Database.inList} statement apiece. */
export function inListChunks<T>(values: readonly T[], size: number): T[][] {
  if (!Number.isInteger(size) || size < 1 || size > IN_LIST_MAX)
    throw new RangeError(`inListChunks: size must be a whole number from 1 to ${IN_LIST_MAX}, got ${size}`);
  const out: T[][] = [];
  for (let at = 0; at < values.length; at += size) out.push(values.slice(at, at + size));
  return out;
}

/** Rows per statement of {@link Database.insertRows} on PostgreSQL. */
const INSERT_PAGE = 10_000;

/** The part of better-sqlite3's connection that {@link Database.insertRows} uses. */
interface SqliteConnection {
  prepare(sql: string): SqliteStatement;
}
interface SqliteStatement {
  run(...params: unknown[]): unknown;
}

/**
 * The process's database handle: the data source plus write transactions that
 * behave the same on both databases.
 *
 * PostgreSQL: ordinary READ COMMITTED transactions from the pool.
 * SQLite: better-sqlite3 has one connection per process, so transactions of
 * concurrent requests are serialised by a mutex, and each one starts with
 * `BEGIN IMMEDIATE` so that it takes the file's write lock up front; a deferred
 * transaction that upgrades to a writer would fail with SQLITE_BUSY when
 * another process (a worker) wrote in between.
 */
export class Database {
  readonly dialect: Dialect;
  private readonly mutex = new Mutex();
  private readonly statements = new Map<string, SqliteStatement>();

  constructor(readonly dataSource: DataSource) {
    this.dialect = dataSource.options.type === 'postgres' ? 'postgres' : 'sqlite';
  }

  get pg(): boolean {
    return this.dialect === 'postgres';
  }

  get manager(): EntityManager {
    return this.dataSource.manager;
  }

  /** Runs `fn` in one write transaction; retries a few times when SQLite reports the file busy. */
  async write<T>(fn: (m: EntityManager) => Promise<T>): Promise<T> {
    // READ COMMITTED is PostgreSQL's default: naming it would cost one more statement per transaction.
    if (this.pg) return this.dataSource.transaction(fn);
    return this.mutex.run(async () => {
      const qr = this.dataSource.createQueryRunner();
      for (let attempt = 0; ; attempt++) {
        try {
          await qr.query('BEGIN IMMEDIATE');
          break;
        } catch (e) {
          if (attempt >= 20 || !/SQLITE_BUSY|database is locked/i.test(String(e))) throw e;
          await new Promise((r) => setTimeout(r, 25 * (attempt + 1)));
        }
      }
      // TypeORM's SQLite runner tracks its own transaction state: mark ours as
      // open so nested save() calls use savepoints instead of a second BEGIN.
      const state = qr as unknown as { isTransactionActive: boolean; transactionDepth: number };
      state.isTransactionActive = true;
      state.transactionDepth = 1;
      try {
        const result = await fn(qr.manager);
        await qr.commitTransaction();
        return result;
      } catch (e) {
        // commitTransaction clears the flag, which the checker cannot see after the `true` set above.
        // eslint-disable-next-line @typescript-eslint/no-unnecessary-condition -- the runner changes the flag
        if (state.isTransactionActive) await qr.rollbackTransaction();
        throw e;
      }
    });
  }

  /**
   * After texts were erased: on SQLite, copies the write-ahead log into the file and truncates the log, so it holds no
   * page written before the erasure (with `secure_delete` on, the file itself keeps no freed bytes). It waits for the
   * write lock like a write; a reader in another process can keep the log from being truncated, and the next
   * checkpoint then finishes the work. PostgreSQL: nothing to do here (the README says what its files keep).
   */
  async releaseErased(): Promise<void> {
    if (this.pg) return;
    await this.mutex.run(() => this.dataSource.query('PRAGMA wal_checkpoint(TRUNCATE)'));
  }

  /**
   * The locking clause to end a `SELECT` with, so that the rows it reads stay this transaction's until it ends:
   * `FOR UPDATE` (with `OF alias` and `SKIP LOCKED` as asked) on PostgreSQL; nothing on SQLite, where the write
   * transaction ({@link write}) holds the file's write lock from its first statement, so no other writer runs.
   */
  lockRows(lock: RowLock = {}): string {
    if (!this.pg) return '';
    return ` FOR ${lock.noKey ? 'NO KEY ' : ''}UPDATE${lock.of ? ` OF ${lock.of}` : ''}${lock.skipLocked ? ' SKIP LOCKED' : ''}`;
  }

  /** Reads a boolean column of a raw query (SQLite keeps booleans as 0 and 1; as parameters, TypeORM binds them so). */
  bool(value: DbBool): boolean {
    return value === true || value === 1;
  }

  /**
   * The placeholders of an `IN (…)` list of `count` values whose parameters start at position `from`
   * (`inList(3, 2)` is `$2, $3, $4`). Both databases reject an empty list, so `count` must be at least 1; callers
   * `count` is at most {@link IN_LIST_MAX}.
   */
  inList(count: number, from = 1): string {
    if (!Number.isInteger(count) || count < 1 || count > IN_LIST_MAX)
      throw new RangeError(`inList: count must be a whole number from 1 to ${IN_LIST_MAX}, got ${count}`);
    if (!Number.isInteger(from) || from < 1)
      throw new RangeError(`inList: from must be a whole number from 1, got ${from}`);
    return Array.from({ length: count }, (_, i) => `$${i + from}`).join(', ');
  }

  /** A query parameter for a timestamp, in the form the database compares correctly. */
  time(date: Date): Date | string {
    // TypeORM stores SQLite datetimes as UTC 'YYYY-MM-DD HH:MM:SS.SSS' text; compare like with like.
    return this.pg ? date : date.toISOString().replace('T', ' ').replace('Z', '');
  }

  /** Reads a timestamp returned by a raw query. */
  parseTime(value: unknown): Date | null {
    if (value === null || value === undefined) return null;
    if (value instanceof Date) return value;
    // PostgreSQL's driver gives a Date; SQLite keeps times as text.
    if (typeof value !== 'string') throw new TypeError(`parseTime: not a time: ${typeof value}`);
    return new Date(/[zZ]|[+-]\d\d:?\d\d$/.test(value) ? value : `${value.replace(' ', 'T')}Z`);
  }

  /**
   * Runs raw SQL written with PostgreSQL's numbered placeholders (`$1`, `$2`…)
   * on either database: for SQLite each `$n` becomes `?` with its parameter
   * repeated in order, so one SQL text serves both.
   */
  async query<T = Record<string, unknown>>(m: EntityManager | null, sql: string, params: unknown[] = []): Promise<T[]> {
    const runner = m ?? this.dataSource.manager;
    if (this.pg) {
      const res: unknown = await runner.query(sql, params);
      // TypeORM answers UPDATE and DELETE on PostgreSQL with [rows, affectedCount]; give every statement the same shape.
      if (
        /^\s*(UPDATE|DELETE)\b/i.test(sql) &&
        Array.isArray(res) &&
        res.length === 2 &&
        Array.isArray(res[0]) &&
        typeof res[1] === 'number'
      )
        return res[0] as T[];
      return res as T[];
    }
    const ordered: unknown[] = [];
    const text = sql.replace(/\$(\d+)/g, (_, n: string) => {
      const i = Number(n) - 1;
      if (i < 0 || i >= params.length)
        throw new RangeError(`query: placeholder $${n} has no parameter (got ${params.length})`);
      ordered.push(params[i]);
      return '?';
    });
    return runner.query<T[]>(text, ordered);
  }

  /** The first row {@link query} returns, or `undefined` when there is none. */
  async queryOne<T = Record<string, unknown>>(
    m: EntityManager | null,
    sql: string,
    params: unknown[] = [],
  ): Promise<T | undefined> {
    return (await this.query<T>(m, sql, params)).at(0);
  }

  /**
   * Inserts many rows into `table` inside a write transaction (`m` from
   * {@link write}), skipping rows that collide with existing ones
   * (`ON CONFLICT DO NOTHING`). PostgreSQL: one statement per
   * {@link INSERT_PAGE} rows, each column sent as one array and spread by
   * `unnest` (no per-row placeholders to parse). SQLite: one prepared
   * statement run per row on the connection the transaction holds.
   */
  async insertRows(
    m: EntityManager,
    table: string,
    columns: readonly InsertColumn[],
    rows: readonly (readonly unknown[])[],
  ): Promise<void> {
    if (rows.length === 0) return;
    const names = columns.map((c) => c.name).join(', ');
    if (this.pg) {
      const spread = columns.map((c, i) => `$${i + 1}::${c.pgType}[]`).join(', ');
      const sql = `INSERT INTO ${table} (${names}) SELECT * FROM unnest(${spread}) ON CONFLICT DO NOTHING`;
      for (let at = 0; at < rows.length; at += INSERT_PAGE) {
        const page = rows.slice(at, at + INSERT_PAGE);
        await m.query(
          sql,
          columns.map((_, i) => page.map((r) => r[i])),
        );
      }
      return;
    }
    const sql = `INSERT INTO ${table} (${names}) VALUES (${columns.map(() => '?').join(', ')}) ON CONFLICT DO NOTHING`;
    let statement = this.statements.get(sql);
    if (!statement) {
      statement = (
        this.dataSource.driver as unknown as { databaseConnection: SqliteConnection }
      ).databaseConnection.prepare(sql);
      this.statements.set(sql, statement);
    }
    for (const r of rows) statement.run(...r);
  }

  /** Whether the database answers a trivial statement (the readiness check bounds how long it may take). */
  async ping(): Promise<void> {
    await this.dataSource.query('SELECT 1');
  }

  async close(): Promise<void> {
    if (this.dataSource.isInitialized) await this.dataSource.destroy();
  }
}

import type { DataSource, EntityManager } from 'typeorm';
import type { Dialect } from './dialect.js';
import { Mutex } from './mutex.js';

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
        if (state.isTransactionActive) await qr.rollbackTransaction();
        throw e;
      }
    });
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
    const s = String(value);
    return new Date(/[zZ]|[+-]\d\d:?\d\d$/.test(s) ? s : `${s.replace(' ', 'T')}Z`);
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
      if (/^\s*(UPDATE|DELETE)\b/i.test(sql) && Array.isArray(res) && res.length === 2 && Array.isArray(res[0]) && typeof res[1] === 'number') return res[0] as T[];
      return res as T[];
    }
    const ordered: unknown[] = [];
    const text = sql.replace(/\$(\d+)/g, (_, n: string) => {
      const i = Number(n) - 1;
      if (i < 0 || i >= params.length) throw new RangeError(`query: placeholder $${n} has no parameter (got ${params.length})`);
      ordered.push(params[i]);
      return '?';
    });
    return runner.query(text, ordered) as Promise<T[]>;
  }

  async close(): Promise<void> {
    if (this.dataSource.isInitialized) await this.dataSource.destroy();
  }
}

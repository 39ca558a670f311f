import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import type { DatabaseConfig } from '#config';

/** A database made for one test file, dropped afterwards. */
export interface TestDatabase {
  kind: 'sqlite' | 'postgres';
  config: DatabaseConfig;
  drop(): Promise<void>;
}

/**
 * PostgreSQL server the tests use. CI sets TEST_DATABASE_URL; locally the
 * default is the machine's own server. A test that cannot reach it fails: no
 * silent skipping.
 */
export const TEST_DATABASE_URL = process.env.TEST_DATABASE_URL ?? 'postgres://postgres@127.0.0.1:5432/test';

export const DATABASE_KINDS = ['sqlite', 'postgres'] as const;

export async function createTestDatabase(kind: 'sqlite' | 'postgres'): Promise<TestDatabase> {
  if (kind === 'sqlite') {
    const dir = mkdtempSync(join(tmpdir(), 'cribra-db-'));
    const file = join(dir, 'test.sqlite');
    return {
      kind,
      config: { kind: 'sqlite', file, url: `sqlite:${file}` },
      drop: async () => rmSync(dir, { recursive: true, force: true }),
    };
  }
  const name = `cribra_t_${randomBytes(5).toString('hex')}`;
  const admin = new pg.Client({ connectionString: TEST_DATABASE_URL });
  await admin.connect();
  try {
    await admin.query(`CREATE DATABASE ${name}`);
  } finally {
    await admin.end();
  }
  const url = new URL(TEST_DATABASE_URL);
  url.pathname = `/${name}`;
  return {
    kind,
    config: { kind: 'postgres', url: url.toString() },
    drop: async () => {
      const c = new pg.Client({ connectionString: TEST_DATABASE_URL });
      await c.connect();
      try {
        await c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
      } finally {
        await c.end();
      }
    },
  };
}

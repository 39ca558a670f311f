import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import BetterSqlite3 from 'better-sqlite3';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { digestFile, extractArchive, writeArchive } from '../../apps/cli/src/backup/archive.js';
import { MIGRATIONS, openDatabase } from '#database';
import { createTestDatabase, TEST_DATABASE_URL, type TestDatabase } from '../support/databases.js';
import { built, freePort } from '../support/processes.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

/** A `cribra` command as its own process. */
function cribra(args: string[], env: Record<string, string>) {
  const child = spawn(process.execPath, [built('apps/cli/src/main.js'), ...args], {
    env: { PATH: process.env.PATH ?? '', TZ: 'UTC', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let stdout = '';
  let stderr = '';
  child.stdout.on('data', (d: Buffer) => (stdout += d.toString('utf8')));
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString('utf8')));
  return new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) =>
    child.once('exit', (code) => resolve({ code, stdout, stderr })),
  );
}

describe('cribra backup and restore on SQLite, under load', () => {
  let s: Stack;
  let deskId: number;
  const reviewers: string[] = [];
  const dirs: string[] = [];
  const tmp = () => {
    const d = mkdtempSync(join(tmpdir(), 'cribra-backup-test-'));
    dirs.push(d);
    return d;
  };

  beforeAll(async () => {
    s = await startStack('sqlite');
    const sup = await s.user('sup', 'supervisor');
    for (let i = 0; i < 4; i++) reviewers.push(await s.user(`r${i}`, 'reviewer'));
    deskId = (
      await s.call(sup, 'POST', '/api/desks', { name: 'backup', categories: ['threat', 'ok'], secondOpinionShare: 0 })
    ).body.id;
    await s.enrol(deskId);
    const lines = Array.from({ length: 400 }, (_, i) => JSON.stringify({ text: `post number ${i}` })).join('\n');
    const imp = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, lines, {
      'content-type': 'application/x-ndjson',
    });
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      30_000,
      'the import',
    );
    // No training during the test: the load is verdicts being written.
    await s.stopWorker();
  }, 60_000);
  afterAll(async () => {
    await (s as Stack | undefined)?.stop();
    for (const d of dirs) rmSync(d, { recursive: true, force: true });
  });

  it('copies a consistent database while verdicts are written, and restores every verdict and audit event into a fresh data folder', async () => {
    const acked: number[] = [];
    let stop = false;
    const work = reviewers.map(async (token, r) => {
      for (let n = 0; !stop; n++) {
        const lease = await s.call(token, 'POST', `/api/desks/${deskId}/leases`);
        if (lease.status !== 201) return;
        const v = await s.call(token, 'POST', `/api/desks/${deskId}/verdicts`, {
          leaseId: lease.body.lease.id,
          itemId: lease.body.item.id,
          category: n % 3 ? 'ok' : 'threat',
          clientId: `b${r}-${n}`,
        });
        if (v.status === 201) acked.push(Number(v.body.verdict.id));
      }
    });
    await eventually(async () => (acked.length >= 20 ? true : undefined), 30_000, '20 verdicts');
    const before = [...acked];
    const [{ maxAudit }] = await s.db.query<{ maxAudit: number }>(
      null,
      'SELECT MAX(id) AS "maxAudit" FROM audit_events',
    );
    const archive = join(tmp(), 'cribra.backup');
    const backup = await cribra(['backup', '--to', archive], {
      DATA_DIR: s.config.dataDir,
      DATABASE_URL: s.config.database.url,
    });
    const during = acked.length - before.length;
    stop = true;
    await Promise.all(work);
    expect(backup.code, backup.stderr).toBe(0);
    const out = JSON.parse(backup.stdout.trim());
    expect(out).toMatchObject({ to: archive, schema: MIGRATIONS.at(-1)!.name });
    // Verdicts went on being written while the copy was made.
    expect(during).toBeGreaterThan(0);

    const fresh = tmp();
    const restore = await cribra(['restore', '--from', archive], { DATA_DIR: fresh, PORT: String(await freePort()) });
    expect(restore.code, restore.stderr).toBe(0);
    const copy = new BetterSqlite3(join(fresh, 'cribra.sqlite'), { readonly: true });
    try {
      expect(copy.pragma('integrity_check', { simple: true })).toBe('ok');
      const verdicts = new Set(copy.prepare('SELECT id FROM verdicts').pluck().all() as number[]);
      for (const id of before) expect(verdicts.has(id)).toBe(true);
      const audit = copy.prepare('SELECT id FROM audit_events WHERE id <= ?').pluck().all(maxAudit) as number[];
      expect(audit).toHaveLength(maxAudit);
      // One moment: every verdict in the copy has its audit event, and no audit event names a missing verdict.
      const logged = new Set(
        copy
          .prepare(`SELECT entity_id FROM audit_events WHERE action = 'verdict.create'`)
          .pluck()
          .all()
          .map((x) => Number(x)),
      );
      expect([...verdicts].filter((id) => !logged.has(id))).toEqual([]);
      expect([...logged].filter((id) => !verdicts.has(id))).toEqual([]);
      // The schema the copy holds: every migration of this version, so the next start has nothing to do.
      expect(copy.prepare('SELECT name FROM migrations ORDER BY id').pluck().all()).toEqual(
        MIGRATIONS.map((m) => m.name),
      );
    } finally {
      copy.close();
    }
    // Refusals, three processes at once: the service running on the target folder; an archive from a newer
    // schema; a damaged archive.
    const busy = tmp();
    writeFileSync(join(busy, 'launcher.json'), JSON.stringify({ launcherPid: process.pid, processes: {} }));
    const unpacked = tmp();
    const manifest = await extractArchive(archive, unpacked);
    const sources = new Map(manifest.files.map((f) => [f.path, join(unpacked, f.path)]));
    const newer = join(tmp(), 'newer.backup');
    await writeArchive(newer, { ...manifest, migrations: [...manifest.migrations, 'Later9999999999999'] }, sources);
    const db = join(unpacked, 'cribra.sqlite');
    writeFileSync(db, Buffer.alloc((await digestFile(db)).bytes, 1));
    const damaged = join(tmp(), 'damaged.backup');
    await writeArchive(damaged, manifest, sources);
    const [refused, tooNew, bad] = await Promise.all([
      cribra(['restore', '--from', archive], { DATA_DIR: busy, PORT: String(await freePort()) }),
      cribra(['restore', '--from', newer], { DATA_DIR: tmp(), PORT: String(await freePort()) }),
      cribra(['restore', '--from', damaged], { DATA_DIR: tmp(), PORT: String(await freePort()) }),
    ]);
    expect(refused.code).toBe(1);
    expect(refused.stderr).toMatch(/the service is running: its launcher runs as process \d+/);
    expect(tooNew.code).toBe(1);
    expect(tooNew.stderr).toMatch(/schema newer than this version of Cribra \(migrations Later9999999999999/);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/cribra\.sqlite: its checksum does not match the manifest/);
  }, 90_000);
});

describe('the PostgreSQL recipe: pg_dump and pg_restore', () => {
  const made: TestDatabase[] = [];
  const extra: string[] = [];
  afterAll(async () => {
    for (const d of made) await d.drop();
    const admin = new pg.Client({ connectionString: TEST_DATABASE_URL });
    await admin.connect();
    for (const name of extra) await admin.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
    await admin.end();
  });

  it('restores a dump into an empty database with every row and the schema version', async () => {
    const tdb = await createTestDatabase('postgres');
    made.push(tdb);
    const ds = await openDatabase(tdb.config);
    await ds.query(
      `INSERT INTO users (name, role, disabled, created_at) VALUES ('rowan', 'supervisor', false, now()), ('ash', 'reviewer', false, now())`,
    );
    await ds.destroy();
    const dump = join(mkdtempSync(join(tmpdir(), 'cribra-pgdump-')), 'cribra.dump');
    // The README's recipe, word for word apart from the names.
    const dumped = spawnSync('pg_dump', ['--format=custom', `--file=${dump}`, tdb.config.url], { encoding: 'utf8' });
    expect(dumped.status, dumped.stderr).toBe(0);
    const target = new URL(tdb.config.url);
    const name = `${target.pathname.slice(1)}_restored`;
    extra.push(name);
    const created = spawnSync(
      'createdb',
      ['-h', target.hostname, '-p', target.port || '5432', '-U', target.username, name],
      {
        encoding: 'utf8',
      },
    );
    expect(created.status, created.stderr).toBe(0);
    target.pathname = `/${name}`;
    const restored = spawnSync('pg_restore', ['--no-owner', '--exit-on-error', `--dbname=${target.toString()}`, dump], {
      encoding: 'utf8',
    });
    expect(restored.status, restored.stderr).toBe(0);
    const check = await openDatabase({ kind: 'postgres', url: target.toString() }, { migrate: false });
    try {
      expect(await check.showMigrations()).toBe(false);
      const users = await check.query<Array<{ name: string }>>('SELECT name FROM users ORDER BY name');
      expect(users.map((u) => u.name)).toEqual(['ash', 'rowan']);
    } finally {
      await check.destroy();
    }
    rmSync(join(dump, '..'), { recursive: true, force: true });
  });
});

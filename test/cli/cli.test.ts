import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { AuthService } from '#auth';
import { parseConfig } from '#config';
import { DATABASE_KINDS, createTestDatabase, type TestDatabase } from '../support/databases.js';
import { built } from '../support/processes.js';

const cli = (args: string[], env: Record<string, string>, input?: string) =>
  spawnSync(process.execPath, [built('apps/cli/src/main.js'), ...args], {
    env: { PATH: process.env.PATH ?? '', ...env },
    input,
    encoding: 'utf8',
    timeout: 60_000,
  });

describe.each(DATABASE_KINDS)('cli user add on %s', (kind) => {
  const cleanup: TestDatabase[] = [];
  afterAll(async () => Promise.all(cleanup.map((d) => d.drop())));

  it('creates a user, prints one JSON line with a token shown once, and reads the password from stdin', async () => {
    const tdb = await createTestDatabase(kind);
    cleanup.push(tdb);
    const dataDir = mkdtempSync(join(tmpdir(), 'cribra-cli-'));
    const env = { DATA_DIR: dataDir, DATABASE_URL: tdb.config.url };
    const r = cli(
      ['user', 'add', '--name', 'rowan', '--role', 'supervisor', '--password-stdin'],
      env,
      'a-good-long-password\n',
    );
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines).toHaveLength(1);
    const out = JSON.parse(lines[0]);
    expect(Object.keys(out)).toEqual(['id', 'name', 'role', 'token']);
    expect(out).toMatchObject({ name: 'rowan', role: 'supervisor' });
    expect(out.token).toMatch(/^cbt_/);

    // The token and the password both work, through the service's own checks.
    const { openDatabase, Database } = await import('#database');
    const ds = await openDatabase(tdb.config);
    try {
      const auth = new AuthService(new Database(ds), { record: async () => undefined } as never, parseConfig(env));
      expect(await auth.authenticate(out.token)).toMatchObject({ name: 'rowan', role: 'supervisor', via: 'token' });
      await expect(auth.checkPassword('rowan', 'a-good-long-password')).resolves.toMatchObject({
        user: { name: 'rowan' },
      });
      const [{ secret_hash }] = await ds.query(`SELECT secret_hash FROM credentials WHERE kind = 'token'`);
      expect(secret_hash).not.toContain(out.token.slice(4));
    } finally {
      await ds.destroy();
    }

    const dup = cli(['user', 'add', '--name', 'rowan', '--role', 'reviewer'], env);
    expect(dup.status).toBe(1);
    expect(dup.stderr).toMatch(/exists already/);
    rmSync(dataDir, { recursive: true, force: true });
  });
});

describe('boot checks', () => {
  it('refuses bad arguments with a usage line', () => {
    const env = { DATA_DIR: mkdtempSync(join(tmpdir(), 'cribra-cli-')) };
    const badRole = cli(['user', 'add', '--name', 'x', '--role', 'owner'], env);
    expect(badRole.status).toBe(2);
    expect(badRole.stderr).toMatch(/--role "owner": expected one of reviewer, supervisor, auditor, admin/);
    const missing = cli(['user', 'add', '--name', 'x'], env);
    expect(missing.status).toBe(2);
    expect(missing.stderr).toMatch(/--role is required/);
    expect(missing.stderr).toMatch(/usage: cribra user add --name NAME --role ROLE \[--password-stdin\]/);
    const unknown = cli(['user', 'add', '--name', 'x', '--role', 'reviewer', '--colour', 'red'], env);
    expect(unknown.stderr).toMatch(/unknown option --colour/);
    const shortPw = cli(['user', 'add', '--name', 'x', '--role', 'reviewer', '--password-stdin'], env, 'short');
    expect(shortPw.stderr).toMatch(/at least 8 characters/);
  });
  it('answers --help for every command from the build, and refuses an unknown command', () => {
    const env = { DATA_DIR: mkdtempSync(join(tmpdir(), 'cribra-cli-')) };
    const top = cli(['--help'], env);
    expect(top.status).toBe(0);
    for (const name of ['start', 'user', 'migrate', 'rehearse'])
      expect(top.stdout).toMatch(new RegExp(`^  ${name} `, 'm'));
    const start = cli(['start', '--help'], env);
    expect(start.status).toBe(0);
    expect(start.stdout).toMatch(/--workers N +worker processes/);
    const add = cli(['help', 'user', 'add'], env);
    expect(add.status).toBe(0);
    expect(add.stdout).toMatch(
      /--role ROLE +the global role \(required; one of reviewer, supervisor, auditor, admin\)/,
    );
    const unknown = cli(['frobnicate'], env);
    expect(unknown.status).toBe(2);
    expect(unknown.stderr).toMatch(/unknown command "frobnicate"/);
    const bad = cli(['start', '--workers', '40'], env);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--workers "40": expected a whole number from 0 to 16/);
  });

  it('lists every bad variable in one error and exits 2', () => {
    const r = spawnSync(process.execPath, [built('apps/api/src/main.js')], {
      env: { PATH: process.env.PATH ?? '', PORT: 'x', DATABASE_URL: 'mysql://db', REDIS_URL: 'nope' },
      encoding: 'utf8',
      timeout: 30_000,
    });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/Invalid configuration:\n {2}- PORT="x".*\n {2}- DATABASE_URL.*\n {2}- REDIS_URL/);
  });

  it('says how to install Redis when REDIS_URL is unset and redis-server is not on PATH', () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'cribra-start-'));
    const r = spawnSync(process.execPath, [built('apps/cli/src/main.js'), 'start'], {
      env: { PATH: '/nonexistent', DATA_DIR: dataDir },
      encoding: 'utf8',
      timeout: 30_000,
    });
    expect(r.status).toBe(3);
    expect(r.stderr).toMatch(/there is none on PATH/);
    expect(r.stderr).toMatch(/apt-get install redis-server/);
    rmSync(dataDir, { recursive: true, force: true });
  });
});

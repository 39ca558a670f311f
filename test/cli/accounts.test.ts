import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

/**
 * `cribra user …` and `cribra member …` against the database a running API uses: what the command line changes, the
 * running API sees (a disabled account within its credential cache's 3 s). Run in this process, as `cribra` runs
 * them (the parser and the commands, reading DATABASE_URL and DATA_DIR from the environment).
 */
describe.each(DATABASE_KINDS)('cli accounts and members on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let deskId = 0;
  const saved = { DATABASE_URL: process.env.DATABASE_URL, DATA_DIR: process.env.DATA_DIR };

  const cribra = async (...argv: string[]) => {
    // A fresh module graph per database: the configuration is read once per process, as in the real command.
    const { allCommands } = await import('../../apps/cli/src/commands.js');
    const { runEntry } = await import('../../apps/cli/src/cli-command.js');
    let out = '';
    let err = '';
    const io = { stdout: { write: (c: string) => (out += c) }, stderr: { write: (c: string) => (err += c) } };
    const code = await runEntry(await allCommands(), argv, io);
    return {
      code,
      out,
      err,
      lines: out.trim()
        ? out
            .trim()
            .split('\n')
            .map((l) => JSON.parse(l) as unknown)
        : [],
    };
  };

  beforeAll(async () => {
    s = await startStack(kind, { worker: false });
    await s.user('cli-admin', 'admin');
    sup = await s.user('cli-sup', 'supervisor', 'a-good-long-password');
    await s.user('cli-rev', 'reviewer');
    const d = await s.call(sup, 'POST', '/api/desks', { name: 'Cli desk', categories: ['threat', 'ok'] });
    expect(d.status).toBe(201);
    deskId = d.body.id;
    process.env.DATABASE_URL = s.config.database.url;
    process.env.DATA_DIR = s.config.dataDir;
    vi.resetModules();
  }, 60_000);
  afterAll(async () => {
    if (saved.DATABASE_URL === undefined) delete process.env.DATABASE_URL;
    else process.env.DATABASE_URL = saved.DATABASE_URL;
    if (saved.DATA_DIR === undefined) delete process.env.DATA_DIR;
    else process.env.DATA_DIR = saved.DATA_DIR;
    await (s as Stack | undefined)?.stop();
  });

  it('lists, disables, enables and changes the role of accounts, and keeps the last admin', async () => {
    const list = await cribra('user', 'list');
    expect(list.code).toBe(0);
    expect(list.lines).toEqual([
      expect.objectContaining({ name: 'cli-admin', role: 'admin', disabled: false }),
      expect.objectContaining({ name: 'cli-sup', role: 'supervisor', disabled: false }),
      expect.objectContaining({ name: 'cli-rev', role: 'reviewer', disabled: false }),
    ]);
    // Disabling revokes the account's token at once.
    const off = await cribra('user', 'disable', '--name', 'cli-sup');
    expect([off.code, off.lines]).toEqual([0, [expect.objectContaining({ name: 'cli-sup', disabled: true })]]);
    await eventually(
      async () => ((await s.call(sup, 'GET', '/api/auth/me')).status === 401 ? true : undefined),
      10_000,
      'the disabled account refused',
    );
    expect((await cribra('user', 'enable', '--name', 'cli-sup')).lines[0]).toMatchObject({ disabled: false });
    expect((await cribra('user', 'role', '--name', 'cli-rev', '--role', 'auditor')).lines[0]).toMatchObject({
      name: 'cli-rev',
      role: 'auditor',
    });
    const last = await cribra('user', 'role', '--name', 'cli-admin', '--role', 'reviewer');
    expect(last.code).toBe(1);
    expect(last.err).toMatch(/cli-admin is the last enabled admin/);
    const nobody = await cribra('user', 'disable', '--name', 'nobody');
    expect([nobody.code, nobody.err]).toEqual([1, 'no user named "nobody"\n']);
    const usage = await cribra('user', 'role', '--name', 'cli-rev', '--role', 'owner');
    expect(usage.code).toBe(2);
    expect(usage.err).toMatch(/--role "owner": expected one of reviewer, supervisor, auditor, admin/);
  });

  it('adds, changes, lists and removes desk members, and keeps a supervisor on the desk', async () => {
    const rev = s.tokens['cli-rev'];
    expect((await s.call(rev, 'GET', `/api/desks/${deskId}`)).status).toBe(404);
    const add = await cribra('member', 'add', '--desk', String(deskId), '--user', 'cli-rev', '--role', 'reviewer');
    expect([add.code, add.lines]).toEqual([0, [expect.objectContaining({ name: 'cli-rev', role: 'reviewer' })]]);
    expect((await s.call(rev, 'GET', `/api/desks/${deskId}`)).body.role).toBe('reviewer');
    await cribra('member', 'add', '--desk', String(deskId), '--user', 'cli-rev', '--role', 'supervisor');
    const list = await cribra('member', 'list', '--desk', String(deskId));
    expect(list.lines.map((m) => [(m as { name: string }).name, (m as { role: string }).role])).toEqual([
      ['cli-rev', 'supervisor'],
      ['cli-sup', 'supervisor'],
    ]);
    expect((await cribra('member', 'remove', '--desk', String(deskId), '--user', 'cli-sup')).code).toBe(0);
    const lastSup = await cribra('member', 'remove', '--desk', String(deskId), '--user', 'cli-rev');
    expect([lastSup.code, lastSup.err]).toEqual([1, expect.stringMatching(/keeps at least one supervisor/)]);
    expect((await s.call(rev, 'GET', `/api/desks/${deskId}`)).body.role).toBe('supervisor');
    const noDesk = await cribra('member', 'list', '--desk', '999999');
    expect([noDesk.code, noDesk.err]).toEqual([1, 'no desk 999999\n']);
    const badDesk = await cribra('member', 'list', '--desk', 'one');
    expect([badDesk.code, badDesk.err]).toEqual([2, expect.stringMatching(/--desk "one": expected a whole number/)]);
    // The audit trail names the command line as the actor.
    const events = await s.db.query<{ action: string; actor_name: string }>(
      null,
      "SELECT action, actor_name FROM audit_events WHERE action LIKE 'member.%' AND actor_name = 'cli' ORDER BY id",
    );
    expect(events.map((e) => e.action)).toEqual(['member.put', 'member.put', 'member.remove']);
  });

  it('resets a password read from standard input, and refuses a common one', async () => {
    const withStdin = async (input: string, ...argv: string[]) => {
      const stdin = Object.getOwnPropertyDescriptor(process, 'stdin')!;
      Object.defineProperty(process, 'stdin', { value: Readable.from([Buffer.from(input)]), configurable: true });
      try {
        return await cribra(...argv);
      } finally {
        Object.defineProperty(process, 'stdin', stdin);
      }
    };
    const weak = await withStdin('password\n', 'user', 'password', '--name', 'cli-sup');
    expect([weak.code, weak.err]).toEqual([2, expect.stringMatching(/the password read from stdin is refused/)]);
    const ok = await withStdin('a-new-long-passphrase\n', 'user', 'password', '--name', 'cli-sup');
    expect([ok.code, ok.err]).toEqual([0, '']);
    expect(ok.lines[0]).toMatchObject({ name: 'cli-sup', disabled: false });
    const signIn = await s.call('', 'POST', '/api/auth/login', { name: 'cli-sup', password: 'a-new-long-passphrase' });
    expect(signIn.status).toBe(200);
  });
});

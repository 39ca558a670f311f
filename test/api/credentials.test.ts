import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, type Stack } from '../support/stack.js';

const PASSWORD = 'a quiet evening on the commons';
const DAY = 86_400_000;

describe.each(DATABASE_KINDS)('tokens, sessions and passwords on %s', (kind) => {
  let s: Stack;
  let admin = '';

  beforeAll(async () => {
    s = await startStack(kind, { worker: false });
    admin = await s.user('cred-admin', 'admin', PASSWORD);
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  const userIdOf = async (name: string) =>
    ((await s.call(admin, 'GET', '/api/users')).body.users as Array<{ id: number; name: string }>).find(
      (u) => u.name === name,
    )!.id;
  const signIn = async (name: string, password = PASSWORD) => {
    const r = await s.call(null, 'POST', '/api/auth/login', { name, password });
    expect(r.status).toBe(200);
    return (r.headers.get('set-cookie') ?? '').split(';')[0];
  };

  it('gives tokens a name and an expiry (90 days unless asked), lists them with their last use, and revokes one', async () => {
    const first = await s.user('cred-rev', 'reviewer', PASSWORD);
    const made = await s.call(first, 'POST', '/api/auth/tokens', { name: 'laptop script' });
    expect(made.status).toBe(201);
    expect(made.body.name).toBe('laptop script');
    expect(Math.abs(new Date(made.body.expiresAt).getTime() - (Date.now() + 90 * DAY))).toBeLessThan(60_000);
    const short = await s.call(first, 'POST', '/api/auth/tokens', { name: 'a week', days: 7 });
    expect(Math.abs(new Date(short.body.expiresAt).getTime() - (Date.now() + 7 * DAY))).toBeLessThan(60_000);
    // Only an admin's token may never expire.
    const never = await s.call(first, 'POST', '/api/auth/tokens', { never: true });
    expect(never.status).toBe(403);
    const adminNever = await s.call(admin, 'POST', '/api/auth/tokens', { name: 'ops', never: true });
    expect(adminNever.status).toBe(201);
    expect(adminNever.body.expiresAt).toBeNull();

    expect((await s.call(made.body.token, 'GET', '/api/auth/me')).status).toBe(200);
    const list = await s.call(first, 'GET', '/api/auth/tokens');
    const listed = list.body.tokens as Array<{ id: number; name: string; lastUsedAt: string | null; expired: boolean }>;
    expect(listed.map((t) => t.name)).toEqual(['a week', 'laptop script', 'first token']);
    expect(JSON.stringify(list.body)).not.toContain(made.body.token.slice(4));
    await new Promise((r) => setTimeout(r, 300)); // the last-used time is written after the answer
    const again = (await s.call(first, 'GET', '/api/auth/tokens')).body.tokens as typeof listed;
    expect(again.find((t) => t.id === made.body.id)!.lastUsedAt).not.toBeNull();

    expect((await s.call(first, 'DELETE', `/api/auth/tokens/${made.body.id}`)).status).toBe(204);
    expect((await s.call(made.body.token, 'GET', '/api/auth/me')).status).toBe(401);
    // Not one's own: 404, as for an unknown one.
    expect((await s.call(admin, 'DELETE', `/api/auth/tokens/${short.body.id}`)).status).toBe(404);
    expect((await s.call(first, 'DELETE', `/api/auth/tokens/${made.body.id}`)).status).toBe(404);
  });

  it('revokes the bearer token a sign-out comes with', async () => {
    const t = await s.user('cred-logout', 'reviewer');
    expect((await s.call(t, 'POST', '/api/auth/logout')).status).toBe(204);
    expect((await s.call(t, 'GET', '/api/auth/me')).status).toBe(401);
  });

  it('revokes every session and token of an account whose password an admin changes, or that is disabled', async () => {
    const token = await s.user('cred-change', 'auditor', PASSWORD);
    const cookie = await signIn('cred-change');
    const id = await userIdOf('cred-change');
    const change = await s.call(admin, 'PATCH', `/api/users/${id}`, { password: 'a brand new passphrase' });
    expect(change.status).toBe(200);
    expect((await s.call(token, 'GET', '/api/auth/me')).status).toBe(401);
    expect((await s.call(null, 'GET', '/api/auth/me', undefined, { cookie })).status).toBe(401);
    await signIn('cred-change', 'a brand new passphrase');
    const audit = await s.call(admin, 'GET', '/api/audit?limit=20');
    const update = (
      audit.body.events as Array<{ action: string; entityId: string; after: Record<string, unknown> }>
    ).find((e) => e.action === 'user.update' && e.entityId === String(id));
    expect(update?.after).toMatchObject({ passwordChanged: true, credentialsRevoked: 2 });

    const cookie2 = await signIn('cred-change', 'a brand new passphrase');
    expect((await s.call(admin, 'PATCH', `/api/users/${id}`, { disabled: true })).status).toBe(200);
    expect((await s.call(null, 'GET', '/api/auth/me', undefined, { cookie: cookie2 })).status).toBe(401);
  });

  it('refuses common, repeated and sequential passwords (NIST SP 800-63B), with what is wrong', async () => {
    for (const password of ['12345678', '        ', 'password', 'abcdefgh', 'Cribra2026']) {
      const r = await s.call(admin, 'POST', '/api/users', {
        name: `weak-${password.trim().length}`,
        role: 'reviewer',
        password,
      });
      expect([password, r.status]).toEqual([password, 400]);
      expect(String(r.body.message)).toMatch(/^password: /);
    }
    const ok = await s.call(admin, 'POST', '/api/users', {
      name: 'strong',
      role: 'reviewer',
      password: 'rain on the bandstand roof',
    });
    expect(ok.status).toBe(201);
    const id = await userIdOf('strong');
    expect((await s.call(admin, 'PATCH', `/api/users/${id}`, { password: 'qwertyuiop' })).status).toBe(400);
  });

  it('keeps the last enabled admin from demoting or disabling itself', async () => {
    const id = await userIdOf('cred-admin');
    const demote = await s.call(admin, 'PATCH', `/api/users/${id}`, { role: 'supervisor' });
    expect(demote.status).toBe(409);
    expect(demote.body.message).toMatch(/last enabled admin/);
    expect((await s.call(admin, 'PATCH', `/api/users/${id}`, { disabled: true })).status).toBe(409);
    await s.user('second-admin', 'admin');
    expect((await s.call(admin, 'PATCH', `/api/users/${id}`, { role: 'supervisor' })).status).toBe(200);
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

type Who = 'anonymous' | 'reviewer' | 'supervisor' | 'auditor' | 'admin';
const ROLES = ['reviewer', 'supervisor', 'auditor', 'admin'] as const;
const ALL: Who[] = [...ROLES];

interface Route {
  method: string;
  path: string;
  allowed: Who[];
  body?: () => unknown;
  headers?: Record<string, string>;
  /** Call with a token made for this call alone (sign-out revokes the token it comes with). */
  ownToken?: boolean;
}

describe.each(DATABASE_KINDS)('the role matrix on %s', (kind) => {
  let s: Stack;
  const token: Partial<Record<Who, string>> = {};
  let deskId = 0;
  let importId = '';
  let leaseId = '';
  let verdictId = 0;
  let itemId = 0;
  let memberId = 0;
  let n = 0;

  beforeAll(async () => {
    s = await startStack(kind);
    for (const r of ROLES) token[r] = await s.user(`the-${r}`, r, 'a-long-password');
    await s.user('joiner', 'reviewer');
    memberId = (await s.call(token.admin!, 'GET', '/api/users')).body.users.find(
      (u: { name: string }) => u.name === 'joiner',
    ).id;
    const d = await s.call(token.supervisor!, 'POST', '/api/desks', { name: 'matrix', categories: ['threat', 'ok'] });
    deskId = d.body.id;
    // Every account but the admin is a member of the desk with its account's role (test/api/desk-access.test.ts
    // checks roles that differ per desk, and non-members).
    await s.enrol(deskId);
    const imp = await s.call(
      token.supervisor!,
      'POST',
      `/api/desks/${deskId}/imports`,
      Array.from({ length: 50 }, (_, i) => JSON.stringify({ text: `post ${i}` })).join('\n'),
      { 'content-type': 'application/x-ndjson' },
    );
    importId = imp.body.importId;
    await eventually(async () =>
      (await s.call(token.supervisor!, 'GET', `/api/imports/${importId}`)).body.state === 'done' ? true : undefined,
    );
    const l = await s.call(token.reviewer!, 'POST', `/api/desks/${deskId}/leases`);
    leaseId = l.body.lease.id;
    const v = await s.call(token.reviewer!, 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId,
      itemId: l.body.item.id,
      category: 'ok',
      clientId: 'matrix-0',
    });
    verdictId = v.body.verdict.id;
    itemId = l.body.item.id;
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  // Who may do what. Reviewers decide but cannot change settings or read others' verdicts;
  // auditors read but cannot decide; admins manage accounts and memberships and read no texts.
  const routes = (): Route[] => [
    { method: 'GET', path: '/api/auth/me', allowed: ALL },
    { method: 'GET', path: '/api/me/preferences', allowed: ALL },
    {
      method: 'PUT',
      path: '/api/me/preferences',
      allowed: ALL,
      body: () => ({ blurText: true, breakReminderMinutes: null }),
    },
    { method: 'POST', path: '/api/auth/tokens', allowed: ALL, body: () => ({ name: 'matrix' }) },
    { method: 'POST', path: '/api/auth/logout', allowed: ALL, ownToken: true },
    { method: 'GET', path: '/api/auth/tokens', allowed: ALL },
    { method: 'DELETE', path: '/api/auth/tokens/999999', allowed: ALL },
    { method: 'GET', path: '/api/users', allowed: ['admin'] },
    { method: 'POST', path: '/api/users', allowed: ['admin'], body: () => ({ name: `made-${n++}`, role: 'reviewer' }) },
    { method: 'PATCH', path: '/api/users/1', allowed: ['admin'], body: () => ({ role: 'reviewer' }) },
    {
      method: 'POST',
      path: '/api/desks',
      allowed: ['supervisor'],
      body: () => ({ name: `desk-${n++}`, categories: ['a', 'b'] }),
    },
    { method: 'GET', path: '/api/desks', allowed: ALL },
    { method: 'GET', path: `/api/desks/${deskId}`, allowed: ['reviewer', 'supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/members`, allowed: ['supervisor', 'auditor', 'admin'] },
    {
      method: 'PUT',
      path: `/api/desks/${deskId}/members/${memberId}`,
      allowed: ['supervisor', 'admin'],
      body: () => ({ role: 'auditor' }),
    },
    { method: 'DELETE', path: `/api/desks/${deskId}/members/${memberId}`, allowed: ['supervisor', 'admin'] },
    { method: 'PATCH', path: `/api/desks/${deskId}`, allowed: ['supervisor'], body: () => ({ randomShare: 0.2 }) },
    {
      method: 'POST',
      path: `/api/desks/${deskId}/imports`,
      allowed: ['supervisor'],
      body: () => `{"text":"row ${n++}"}\n`,
      headers: { 'content-type': 'application/x-ndjson' },
    },
    { method: 'GET', path: `/api/desks/${deskId}/imports`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/imports/${importId}`, allowed: ['supervisor', 'auditor'] },
    { method: 'POST', path: `/api/desks/${deskId}/leases`, allowed: ['reviewer'] },
    { method: 'GET', path: `/api/desks/${deskId}/leases/mine`, allowed: ['reviewer'] },
    { method: 'DELETE', path: `/api/leases/${leaseId}`, allowed: ['reviewer'] },
    {
      method: 'POST',
      path: `/api/desks/${deskId}/verdicts`,
      allowed: ['reviewer'],
      body: () => ({ leaseId, itemId: 1, category: 'ok', clientId: 'matrix-0' }),
    },
    { method: 'POST', path: `/api/verdicts/${verdictId}/undo`, allowed: ['reviewer'] },
    { method: 'GET', path: `/api/desks/${deskId}/verdicts`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/verdicts/mine`, allowed: ['reviewer'] },
    { method: 'GET', path: `/api/desks/${deskId}/verdicts/mine/count`, allowed: ['reviewer'] },
    { method: 'GET', path: `/api/desks/${deskId}/progress`, allowed: ['reviewer', 'supervisor', 'auditor', 'admin'] },
    { method: 'GET', path: '/api/audit', allowed: ALL },
    { method: 'GET', path: `/api/desks/${deskId}/models`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/models/1`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/coverage`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/screening`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/coverage-preview`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/items`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/predictions.csv`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/predictions.ndjson`, allowed: ['supervisor', 'auditor'] },
    // The simulated reviewer (demo): this desk holds no generated posts, so a supervisor's start is a 409.
    { method: 'GET', path: `/api/desks/${deskId}/simulation`, allowed: ['supervisor'] },
    { method: 'POST', path: `/api/desks/${deskId}/simulation`, allowed: ['supervisor'], body: () => ({ minutes: 1 }) },
    { method: 'DELETE', path: `/api/desks/${deskId}/simulation`, allowed: ['supervisor'] },
    { method: 'GET', path: `/api/desks/${deskId}/agreement`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/disagreements`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/erasures`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/subject?source=nowhere`, allowed: ['supervisor', 'auditor'] },
    {
      method: 'POST',
      path: `/api/desks/${deskId}/erasures`,
      allowed: ['supervisor'],
      body: () => ({ externalIds: ['held by no item'], reason: 'the matrix' }),
    },
    { method: 'POST', path: `/api/desks/${deskId}/retention/run?dryRun=1`, allowed: ['supervisor'] },
    {
      method: 'POST',
      path: `/api/items/${itemId}/settle`,
      allowed: ['supervisor'],
      body: () => ({ category: 'ok', reason: 'matrix check' }),
    },
    { method: 'GET', path: `/api/items/${itemId}`, allowed: ['supervisor', 'auditor'] },
    { method: 'POST', path: `/api/items/${itemId}/read`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/trail.csv`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/trail.ndjson`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/reports`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/models/1/report.json`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/models/1/report.html`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/models/1/model.json`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/keyword-counts`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/urgent`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/prevalence`, allowed: ['supervisor', 'auditor'] },
    { method: 'GET', path: `/api/desks/${deskId}/prevalence.csv`, allowed: ['supervisor', 'auditor'] },
    // The item was never marked urgent: a supervisor gets the service's 404, not the guard's 403.
    { method: 'POST', path: `/api/items/${itemId}/acknowledge`, allowed: ['supervisor'] },
    { method: 'GET', path: `/api/desks/${deskId}/term-suggestions`, allowed: ['supervisor'] },
    {
      method: 'POST',
      path: `/api/desks/${deskId}/term-suggestions/accept`,
      allowed: ['supervisor'],
      body: () => ({ category: 'threat', term: 'matrix' }),
    },
    {
      method: 'POST',
      path: `/api/desks/${deskId}/term-suggestions/dismiss`,
      allowed: ['supervisor'],
      body: () => ({ category: 'threat', term: 'matrix' }),
    },
    { method: 'GET', path: '/api/docs-json', allowed: ALL },
  ];

  it('allows each role exactly its routes, and nobody unauthenticated', async () => {
    const failures: string[] = [];
    for (const r of routes()) {
      for (const who of ['anonymous', ...ROLES] as Who[]) {
        const t =
          who === 'anonymous'
            ? null
            : r.ownToken
              ? (await s.call(token[who]!, 'POST', '/api/auth/tokens', { name: 'for one call' })).body.token
              : token[who]!;
        const res = await s.call(t, r.method, r.path, r.body?.(), r.headers);
        // The admin is no member of the desk: its routes answer as if the desk did not exist.
        const onDesk = /^\/api\/(desks\/\d+|items|leases|imports|verdicts)(\/|$)/.test(r.path);
        const refusal = who === 'admin' && onDesk ? 404 : 403;
        const expected = who === 'anonymous' ? [401] : r.allowed.includes(who) ? null : [refusal];
        const ok = expected
          ? expected.includes(res.status)
          : res.status !== 401 && res.status !== 403 && res.status < 500;
        if (!ok)
          failures.push(`${r.method} ${r.path} as ${who}: ${res.status} ${JSON.stringify(res.body).slice(0, 120)}`);
      }
    }
    expect(failures).toEqual([]);
  });

  it('covers every route of the API document', async () => {
    const doc = await s.call(token.admin!, 'GET', '/api/docs-json');
    const documented = Object.entries(doc.body.paths as Record<string, Record<string, unknown>>).flatMap(
      ([path, ops]) => Object.keys(ops).map((m) => `${m.toUpperCase()} ${path}`),
    );
    const pattern = (p: string) => p.replace(/\{[^}]+\}/g, '[^/]+');
    const tested = routes().map((r) => `${r.method} ${r.path.split('?')[0]}`);
    const public_ = ['GET /healthz', 'GET /readyz', 'POST /api/auth/login'];
    const untested = documented.filter(
      (d) => !public_.includes(d) && !tested.some((t) => new RegExp(`^${pattern(d)}$`).test(t)),
    );
    expect(untested).toEqual([]);
  });

  it('lets anyone reach only the health checks and the sign-in', async () => {
    expect((await s.call(null, 'GET', '/healthz')).status).toBe(200);
    expect((await s.call(null, 'GET', '/readyz')).status).toBe(200);
    expect((await s.call(null, 'GET', '/api/docs')).status).toBe(401);
    const bad = await s.call(null, 'POST', '/api/auth/login', { name: 'the-reviewer', password: 'wrong-password' });
    expect(bad.status).toBe(401);
    const good = await s.call(null, 'POST', '/api/auth/login', { name: 'the-reviewer', password: 'a-long-password' });
    expect(good.status).toBe(200);
    const cookie = good.headers.get('set-cookie') ?? '';
    expect(cookie).toMatch(/^cribra_session=cbs_[A-Za-z0-9_-]{43};/);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    const session = cookie.split(';')[0];
    const me = await s.call(null, 'GET', '/api/auth/me', undefined, { cookie: session });
    expect(me.body).toMatchObject({ name: 'the-reviewer', role: 'reviewer', via: 'session' });
    expect((await s.call(null, 'POST', '/api/auth/logout', undefined, { cookie: session })).status).toBe(204);
    expect((await s.call(null, 'GET', '/api/auth/me', undefined, { cookie: session })).status).toBe(401);
    expect((await s.call('cbt_' + 'x'.repeat(43), 'GET', '/api/auth/me')).status).toBe(401);
  });

  it('shuts out a disabled user at once', async () => {
    const t = await s.user('leaver', 'reviewer');
    expect((await s.call(t, 'GET', '/api/auth/me')).status).toBe(200);
    const users = await s.call(token.admin!, 'GET', '/api/users');
    const id = users.body.users.find((u: { name: string }) => u.name === 'leaver').id;
    expect((await s.call(token.admin!, 'PATCH', `/api/users/${id}`, { disabled: true })).status).toBe(200);
    expect((await s.call(t, 'GET', '/api/auth/me')).status).toBe(401);
  });
});

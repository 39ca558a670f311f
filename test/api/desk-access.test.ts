import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

type MemberRole = 'reviewer' | 'supervisor' | 'auditor';
/** Who may call a desk-scoped route: roles on the desk, and `admin` for a global admin on any desk. */
type Allowed = Array<MemberRole | 'admin'>;

/** The things of one desk that desk-scoped paths name. */
interface DeskThings {
  deskId: number;
  itemId: number;
  importId: string;
  /** A lease of the desk's reviewer, open, for the hand-back route. */
  leaseId: string;
  /** The lease the desk's reviewer decided on (a replayed verdict cites it). */
  decidedLeaseId: string;
  verdictId: number;
  /** A user who is no member of the desk, added and removed by the member routes. */
  joinerId: number;
}

interface DeskRoute {
  method: string;
  /** The path as the API document writes it. */
  template: string;
  allowed: Allowed;
  /** A query string the route needs to answer at all. */
  query?: string;
  body?: (t: DeskThings) => unknown;
  headers?: Record<string, string>;
}

const S: MemberRole = 'supervisor';
const R: MemberRole = 'reviewer';
const A: MemberRole = 'auditor';

/**
 * Every route that acts on one desk, with the desk roles that may call it. A route the API document lists with a
 * desk, item, lease, import or verdict parameter and that is missing here fails the test below.
 */
const DESK_ROUTES: DeskRoute[] = [
  { method: 'GET', template: '/api/desks/{deskId}', allowed: [R, S, A] },
  { method: 'PATCH', template: '/api/desks/{deskId}', allowed: [S], body: () => ({ randomShare: 0.2 }) },
  { method: 'GET', template: '/api/desks/{deskId}/members', allowed: [S, A, 'admin'] },
  {
    method: 'PUT',
    template: '/api/desks/{deskId}/members/{userId}',
    allowed: [S, 'admin'],
    body: () => ({ role: 'reviewer' }),
  },
  { method: 'DELETE', template: '/api/desks/{deskId}/members/{userId}', allowed: [S, 'admin'] },
  {
    method: 'POST',
    template: '/api/desks/{deskId}/imports',
    allowed: [S],
    body: (t) => `{"text":"one more post for desk ${t.deskId}"}\n`,
    headers: { 'content-type': 'application/x-ndjson' },
  },
  { method: 'GET', template: '/api/desks/{deskId}/imports', allowed: [S, A] },
  { method: 'GET', template: '/api/imports/{importId}', allowed: [S, A] },
  { method: 'POST', template: '/api/desks/{deskId}/leases', allowed: [R] },
  { method: 'GET', template: '/api/desks/{deskId}/leases/mine', allowed: [R] },
  { method: 'DELETE', template: '/api/leases/{leaseId}', allowed: [R] },
  {
    method: 'POST',
    template: '/api/desks/{deskId}/verdicts',
    allowed: [R],
    // A replay of the verdict made in the set-up: the same client id answers the stored verdict.
    body: (t) => ({ leaseId: t.decidedLeaseId, itemId: t.itemId, category: 'ok', clientId: `setup-${t.deskId}` }),
  },
  { method: 'GET', template: '/api/desks/{deskId}/verdicts', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/verdicts/mine', allowed: [R] },
  {
    method: 'GET',
    template: '/api/desks/{deskId}/verdicts/mine/count',
    allowed: [R],
    query: '?since=2026-01-01T00:00:00.000Z',
  },
  { method: 'GET', template: '/api/desks/{deskId}/progress', allowed: [R, S, A, 'admin'] },
  { method: 'GET', template: '/api/desks/{deskId}/models', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/models/{version}', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/coverage', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/screening', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/coverage-preview', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/items', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/predictions.csv', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/predictions.ndjson', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/simulation', allowed: [S] },
  { method: 'POST', template: '/api/desks/{deskId}/simulation', allowed: [S], body: () => ({ minutes: 1 }) },
  { method: 'DELETE', template: '/api/desks/{deskId}/simulation', allowed: [S] },
  { method: 'GET', template: '/api/desks/{deskId}/keyword-counts', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/term-suggestions', allowed: [S], query: '?category=ok' },
  {
    method: 'POST',
    template: '/api/desks/{deskId}/term-suggestions/accept',
    allowed: [S],
    body: () => ({ category: 'ok', term: 'neighbourly' }),
  },
  {
    method: 'POST',
    template: '/api/desks/{deskId}/term-suggestions/dismiss',
    allowed: [S],
    body: () => ({ category: 'ok', term: 'fence' }),
  },
  { method: 'GET', template: '/api/desks/{deskId}/agreement', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/disagreements', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/erasures', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/subject', allowed: [S, A], query: '?externalId=held-by-no-item' },
  {
    method: 'POST',
    template: '/api/desks/{deskId}/erasures',
    allowed: [S],
    body: () => ({ externalIds: ['held by no item'], reason: 'desk access check' }),
  },
  { method: 'POST', template: '/api/desks/{deskId}/retention/run', allowed: [S], query: '?dryRun=1' },
  {
    method: 'POST',
    template: '/api/items/{itemId}/settle',
    allowed: [S],
    body: () => ({ category: 'ok', reason: 'desk access check' }),
  },
  { method: 'GET', template: '/api/desks/{deskId}/urgent', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/prevalence', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/prevalence.csv', allowed: [S, A] },
  // The set-up's item was never marked urgent: a supervisor gets the service's 404, which is not the guard's.
  { method: 'POST', template: '/api/items/{itemId}/acknowledge', allowed: [S] },
  { method: 'POST', template: '/api/verdicts/{verdictId}/undo', allowed: [R] },
  { method: 'GET', template: '/api/items/{itemId}', allowed: [S, A] },
  { method: 'POST', template: '/api/items/{itemId}/read', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/trail.csv', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/trail.ndjson', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/reports', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/models/{version}/report.json', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/models/{version}/report.html', allowed: [S, A] },
  { method: 'GET', template: '/api/desks/{deskId}/models/{version}/model.json', allowed: [S, A] },
];

/** Routes that act on no single desk; `test/api/roles.test.ts` checks them by account role. */
const UNSCOPED = [
  'GET /healthz',
  'GET /readyz',
  'POST /api/auth/login',
  'POST /api/auth/logout',
  'GET /api/auth/me',
  'GET /api/me/preferences',
  'PUT /api/me/preferences',
  'POST /api/auth/tokens',
  'GET /api/auth/tokens',
  'DELETE /api/auth/tokens/{tokenId}',
  'GET /api/users',
  'POST /api/users',
  'PATCH /api/users/{userId}',
  'POST /api/desks',
  'GET /api/desks',
  'GET /api/audit',
  'GET /api/docs-json',
];

const fill = (template: string, t: DeskThings) =>
  template
    .replace('{deskId}', String(t.deskId))
    .replace('{itemId}', String(t.itemId))
    .replace('{importId}', t.importId)
    .replace('{leaseId}', t.leaseId)
    .replace('{verdictId}', String(t.verdictId))
    .replace('{userId}', String(t.joinerId))
    .replace('{version}', '1');

/** The guard's refusal of a non-member, word for word: the same as for a desk (or item…) that does not exist. */
const GUARD_NOT_FOUND = /^no (desk|item|lease|import|verdict) \S+$/;

describe.each(DATABASE_KINDS)('desk membership on %s', (kind) => {
  let s: Stack;
  const t: Record<string, string> = {};
  const ids: Record<string, number> = {};
  const desks: Record<'A' | 'B', DeskThings> = {} as never;
  /** Each user's role per desk; absent: not a member. `admin` is the global admin, member of neither. */
  const roleOn: Record<string, Partial<Record<'A' | 'B', MemberRole>>> = {
    supA: { A: S },
    supB: { B: S },
    revA: { A: R },
    revB: { B: R },
    audA: { A: A },
    // An account whose role differs from desk to desk (its account role is reviewer).
    mixed: { A: A, B: S },
    outsider: {},
    admin: {},
  };

  const setUpDesk = async (name: 'A' | 'B', supervisor: string, reviewer: string): Promise<DeskThings> => {
    const d = await s.call(t[supervisor], 'POST', '/api/desks', { name: `desk-${name}`, categories: ['threat', 'ok'] });
    expect(d.status).toBe(201);
    expect(d.body.role).toBe('supervisor');
    const deskId = d.body.id as number;
    for (const [user, roles] of Object.entries(roleOn)) {
      const role = roles[name];
      if (role && user !== supervisor) {
        const put = await s.call(t[supervisor], 'PUT', `/api/desks/${deskId}/members/${ids[user]}`, { role });
        expect(put.status, JSON.stringify(put.body)).toBe(200);
      }
    }
    const imp = await s.call(
      t[supervisor],
      'POST',
      `/api/desks/${deskId}/imports`,
      Array.from({ length: 20 }, (_, i) => JSON.stringify({ text: `desk ${name} post ${i}` })).join('\n'),
      { 'content-type': 'application/x-ndjson' },
    );
    const importId = imp.body.importId as string;
    await eventually(async () =>
      (await s.call(t[supervisor], 'GET', `/api/imports/${importId}`)).body.state === 'done' ? true : undefined,
    );
    const l = await s.call(t[reviewer], 'POST', `/api/desks/${deskId}/leases`);
    const v = await s.call(t[reviewer], 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId: l.body.lease.id,
      itemId: l.body.item.id,
      category: 'ok',
      clientId: `setup-${deskId}`,
    });
    expect(v.status, JSON.stringify(v.body)).toBe(201);
    const open = await s.call(t[reviewer], 'POST', `/api/desks/${deskId}/leases`);
    return {
      deskId,
      itemId: l.body.item.id,
      importId,
      leaseId: open.body.lease.id,
      decidedLeaseId: l.body.lease.id,
      verdictId: v.body.verdict.id,
      joinerId: ids.joiner,
    };
  };

  beforeAll(async () => {
    s = await startStack(kind);
    const accounts: Record<string, 'reviewer' | 'supervisor' | 'auditor' | 'admin'> = {
      supA: 'supervisor',
      supB: 'supervisor',
      revA: 'reviewer',
      revB: 'reviewer',
      audA: 'auditor',
      mixed: 'reviewer',
      outsider: 'supervisor',
      admin: 'admin',
      joiner: 'reviewer',
    };
    for (const [name, role] of Object.entries(accounts)) t[name] = await s.user(name, role);
    const users = await s.call(t.admin, 'GET', '/api/users');
    for (const u of users.body.users as Array<{ id: number; name: string }>) ids[u.name] = u.id;
    desks.A = await setUpDesk('A', 'supA', 'revA');
    desks.B = await setUpDesk('B', 'supB', 'revB');
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('lets each member do what their role on that desk allows, and answers 404 to everyone else', async () => {
    const failures: string[] = [];
    let calls = 0;
    for (const r of DESK_ROUTES) {
      for (const desk of ['A', 'B'] as const) {
        for (const user of Object.keys(roleOn)) {
          const things = desks[desk];
          const path = fill(r.template, things) + (r.query ?? '');
          const res = await s.call(t[user], r.method, path, r.body?.(things), r.headers);
          calls++;
          const role = roleOn[user][desk];
          const message = typeof res.body === 'object' && res.body !== null ? String(res.body.message) : '';
          const guardRefused = res.status === 404 && GUARD_NOT_FOUND.test(message);
          const may = role ? r.allowed.includes(role) : user === 'admin' && r.allowed.includes('admin');
          let ok: boolean;
          if (may) ok = res.status < 500 && res.status !== 401 && res.status !== 403 && !guardRefused;
          else if (role) ok = res.status === 403;
          else ok = guardRefused;
          if (!ok)
            failures.push(
              `${r.method} ${r.template} on ${desk} as ${user} (${role ?? 'no member'}): ${res.status} ${message.slice(0, 100)}`,
            );
        }
      }
    }
    expect(failures).toEqual([]);
    expect(calls).toBe(DESK_ROUTES.length * 2 * Object.keys(roleOn).length);
    // Hundreds of calls: on a busy shared machine PostgreSQL's run passed a minute.
  }, 180_000);

  it('lists every documented route, desk-scoped or not', async () => {
    const doc = await s.call(t.admin, 'GET', '/api/docs-json');
    const documented = Object.entries(doc.body.paths as Record<string, Record<string, unknown>>).flatMap(
      ([path, ops]) => Object.keys(ops).map((m) => `${m.toUpperCase()} ${path}`),
    );
    const scoped = DESK_ROUTES.map((r) => `${r.method} ${r.template}`);
    expect(documented.filter((d) => !scoped.includes(d) && !UNSCOPED.includes(d))).toEqual([]);
    // A route with a desk, item, lease, import or verdict parameter acts on a desk: it belongs in the matrix.
    expect(documented.filter((d) => /\{(desk|item|lease|import|verdict)Id\}/.test(d) && !scoped.includes(d))).toEqual(
      [],
    );
    // And nothing in the matrix is stale.
    expect(scoped.filter((r) => !documented.includes(r))).toEqual([]);
  });

  it('does not tell a desk one may not see from a desk that does not exist', async () => {
    const hidden = await s.call(t.outsider, 'GET', `/api/desks/${desks.A.deskId}/items`);
    const missing = await s.call(t.outsider, 'GET', '/api/desks/999999/items');
    expect(hidden.status).toBe(404);
    expect(missing.status).toBe(404);
    expect(hidden.body.message.replace(/\d+/g, 'N')).toBe(missing.body.message.replace(/\d+/g, 'N'));
    const item = await s.call(t.revB, 'POST', `/api/items/${desks.A.itemId}/settle`, { category: 'ok', reason: 'x' });
    expect(item.status).toBe(404);
  });

  it('lists only the desks one is a member of, with the role there; an admin sees every desk', async () => {
    const names = async (user: string) =>
      ((await s.call(t[user], 'GET', '/api/desks')).body.desks as Array<{ name: string; role: string | null }>).map(
        (d) => `${d.name}:${d.role}`,
      );
    expect(await names('revA')).toEqual(['desk-A:reviewer']);
    expect(await names('revB')).toEqual(['desk-B:reviewer']);
    expect(await names('mixed')).toEqual(['desk-A:auditor', 'desk-B:supervisor']);
    expect(await names('outsider')).toEqual([]);
    expect(await names('admin')).toEqual(['desk-A:null', 'desk-B:null']);
  });

  it('shows supervisors and auditors only the audit events of their desks', async () => {
    const desksSeen = async (user: string, query = '') => {
      const res = await s.call(t[user], 'GET', `/api/audit?limit=1000${query}`);
      expect(res.status).toBe(200);
      return [...new Set((res.body.events as Array<{ deskId: number | null }>).map((e) => e.deskId))].sort();
    };
    expect(await desksSeen('supA')).toEqual([desks.A.deskId]);
    expect(await desksSeen('audA')).toEqual([desks.A.deskId]);
    expect(await desksSeen('mixed')).toEqual([desks.A.deskId, desks.B.deskId]);
    expect(await desksSeen('revA')).toEqual([]);
    expect(await desksSeen('outsider')).toEqual([]);
    // Only an admin reads the events of no desk (accounts, sign-ins).
    expect(await desksSeen('admin')).toEqual([desks.A.deskId, desks.B.deskId, null]);
    expect((await s.call(t.supA, 'GET', `/api/audit?deskId=${desks.B.deskId}`)).status).toBe(404);
    expect((await s.call(t.revA, 'GET', `/api/audit?deskId=${desks.A.deskId}`)).status).toBe(403);
    expect(await desksSeen('supB', `&deskId=${desks.B.deskId}`)).toEqual([desks.B.deskId]);
  });

  it('makes the creator supervisor, keeps a supervisor on every desk, and audits membership changes', async () => {
    const list = await s.call(t.supA, 'GET', `/api/desks/${desks.A.deskId}/members`);
    expect(list.status).toBe(200);
    const members = list.body.members as Array<{ name: string; role: string }>;
    expect(members.map((m) => `${m.name}:${m.role}`).sort()).toEqual([
      'audA:auditor',
      'mixed:auditor',
      'revA:reviewer',
      'supA:supervisor',
    ]);
    const lastOne = await s.call(t.admin, 'DELETE', `/api/desks/${desks.A.deskId}/members/${ids.supA}`);
    expect(lastOne.status).toBe(409);
    const demote = await s.call(t.supA, 'PUT', `/api/desks/${desks.A.deskId}/members/${ids.supA}`, { role: 'auditor' });
    expect(demote.status).toBe(409);
    expect(
      (await s.call(t.supA, 'PUT', `/api/desks/${desks.A.deskId}/members/999999`, { role: 'reviewer' })).status,
    ).toBe(404);
    expect(
      (await s.call(t.supA, 'PUT', `/api/desks/${desks.A.deskId}/members/${ids.joiner}`, { role: 'admin' })).status,
    ).toBe(400);
    const audit = await s.call(t.supA, 'GET', `/api/audit?deskId=${desks.A.deskId}&limit=1000`);
    const puts = (audit.body.events as Array<{ action: string; entityId: string; after: { role: string } | null }>)
      .filter((e) => e.action === 'member.put' && e.entityId === String(ids.revA))
      .map((e) => e.after?.role);
    expect(puts).toEqual(['reviewer']);
  });

  it('takes effect at once: a member taken off a desk is refused on the next request', async () => {
    expect((await s.call(t.revB, 'GET', `/api/desks/${desks.B.deskId}/leases/mine`)).status).toBe(200);
    expect((await s.call(t.admin, 'DELETE', `/api/desks/${desks.B.deskId}/members/${ids.revB}`)).status).toBe(204);
    expect((await s.call(t.revB, 'GET', `/api/desks/${desks.B.deskId}/leases/mine`)).status).toBe(404);
    expect((await s.call(t.revB, 'GET', '/api/desks')).body.desks).toEqual([]);
    // An admin who makes itself a member reads the desk like any member of that role.
    expect((await s.call(t.admin, 'GET', `/api/desks/${desks.B.deskId}/items`)).status).toBe(404);
    expect(
      (await s.call(t.admin, 'PUT', `/api/desks/${desks.B.deskId}/members/${ids.admin}`, { role: 'auditor' })).status,
    ).toBe(200);
    expect((await s.call(t.admin, 'GET', `/api/desks/${desks.B.deskId}/items`)).status).toBe(200);
  });

  it('answers 400 to a malformed id before looking anything up', async () => {
    expect((await s.call(t.supA, 'GET', '/api/desks/abc')).status).toBe(400);
    expect((await s.call(t.supA, 'GET', '/api/desks/99999999999')).status).toBe(400);
    expect((await s.call(t.supA, 'GET', '/api/imports/not-a-uuid')).status).toBe(400);
  });
});

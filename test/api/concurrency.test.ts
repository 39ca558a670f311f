import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import type { DbInt } from '#database';

const ITEMS = 1500;
const REVIEWERS = 32;

describe.each(DATABASE_KINDS)('32 concurrent reviewers on %s', (kind) => {
  let s: Stack;
  let deskId: number;
  const tokens: string[] = [];

  beforeAll(async () => {
    s = await startStack(kind);
    const sup = await s.user('sup', 'supervisor');
    for (let i = 0; i < REVIEWERS; i++) tokens.push(await s.user(`r${i}`, 'reviewer'));
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'rush',
      categories: ['threat', 'ok'],
      seedTerms: { threat: ['hurt'] },
      randomShare: 0.2,
    });
    deskId = d.body.id;
    await s.enrol(deskId);
    const lines = Array.from({ length: ITEMS }, (_, i) =>
      JSON.stringify({ text: i % 3 === 0 ? `I will hurt you ${i}` : `calm post ${i}` }),
    );
    const imp = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, lines.join('\n'), {
      'content-type': 'application/x-ndjson',
    });
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
    );
  }, 180_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('leases every item exactly once, with no errors and no deadlock', async () => {
    const seen: number[] = [];
    const statuses = new Map<number, number>();
    await Promise.all(
      tokens.map(async (t) => {
        for (;;) {
          const r = await s.call(t, 'POST', `/api/desks/${deskId}/leases`);
          statuses.set(r.status, (statuses.get(r.status) ?? 0) + 1);
          if (r.status !== 201) break;
          seen.push(r.body.item.id);
        }
      }),
    );
    expect(Object.fromEntries(statuses)).toEqual({ 201: ITEMS, 204: REVIEWERS });
    expect(new Set(seen).size).toBe(ITEMS);
    const [row] = await s.db.query<{ leases: string | number; items: string | number }>(
      null,
      'SELECT COUNT(*) AS leases, COUNT(DISTINCT item_id) AS items FROM leases WHERE desk_id = $1',
      [deskId],
    );
    expect({ leases: Number(row.leases), items: Number(row.items) }).toEqual({ leases: ITEMS, items: ITEMS });
  }, 180_000);

  it('stores one verdict when the same clientId arrives 8 times at once', async () => {
    const [l] = await s.db.query<{ id: string; item_id: DbInt; reviewer_id: DbInt }>(
      null,
      'SELECT id, item_id, reviewer_id FROM leases WHERE desk_id = $1 AND closed_at IS NULL ORDER BY id LIMIT 1',
      [deskId],
    );
    const [u] = await s.db.query<{ name: string }>(null, 'SELECT name FROM users WHERE id = $1', [l.reviewer_id]);
    const token = s.tokens[u.name];
    const replies = await Promise.all(
      Array.from({ length: 8 }, () =>
        s.call(token, 'POST', `/api/desks/${deskId}/verdicts`, {
          leaseId: l.id,
          itemId: Number(l.item_id),
          category: 'ok',
          clientId: 'same-key',
        }),
      ),
    );
    const codes = replies.map((r) => r.status).sort();
    expect(codes.filter((c) => c === 201)).toHaveLength(1);
    expect(codes.filter((c) => c === 200)).toHaveLength(7);
    expect(new Set(replies.map((r) => r.body.verdict.id)).size).toBe(1);
    const [{ n }] = await s.db.query<{ n: string | number }>(
      null,
      `SELECT COUNT(*) AS n FROM verdicts WHERE client_id = 'same-key'`,
    );
    expect(Number(n)).toBe(1);
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, type Stack } from '../support/stack.js';
import { deskWithItems } from '../support/verdict-rows.js';
import type { DbInt } from '#database';

const ITEMS = 300;
const SHARE = 0.2;
const REVIEWERS = 8;

describe.each(DATABASE_KINDS)('second opinions on %s', (kind) => {
  let s: Stack;
  let sup = '';
  const names = Array.from({ length: REVIEWERS }, (_, i) => `so-rev${i}`);

  beforeAll(async () => {
    // The worker runs the imports; no model ever trains here (no verdict names harassment, so the first model waits).
    s = await startStack(kind);
    sup = await s.user('so-sup', 'supervisor');
    for (const n of names) await s.user(n, 'reviewer');
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  const lease = (who: string, deskId: number) => s.call(s.tokens[who], 'POST', `/api/desks/${deskId}/leases`);
  /** What a lease answer holds that a verdict refers to. */
  interface Grant {
    lease: { id: string };
    item: { id: number };
  }
  const decide = (who: string, deskId: number, l: Grant, category: string, note?: string) =>
    s.call(s.tokens[who], 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId: l.lease.id,
      itemId: l.item.id,
      category,
      clientId: `${who}-${l.lease.id}`,
      ...(note ? { note } : {}),
    });

  it('validates the desk setting and defaults it to 0.1', async () => {
    const d = await s.call(sup, 'POST', '/api/desks', { name: 'so-default', categories: ['a', 'b'] });
    expect(d.body.secondOpinionShare).toBe(0.1);
    expect((await s.call(sup, 'PATCH', `/api/desks/${d.body.id}`, { secondOpinionShare: 1.2 })).status).toBe(400);
    expect(
      (
        await s.call(sup, 'POST', '/api/desks', { name: 'so-bad', categories: ['a', 'b'], secondOpinionShare: -0.5 })
      ).body.message.join(' '),
    ).toMatch(/secondOpinionShare/);
    const p = await s.call(sup, 'PATCH', `/api/desks/${d.body.id}`, { secondOpinionShare: 0.35 });
    expect(p.status).toBe(200);
    expect(p.body.secondOpinionShare).toBe(0.35);
  });

  it('serves the share of decided items again, each to a different reviewer, never revealing the first verdict, under concurrency', async () => {
    const { deskId } = await deskWithItems(s, sup, ['threat', 'harassment', 'ok'], ITEMS, 'so-share');
    expect((await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { secondOpinionShare: SHARE })).status).toBe(200);
    const firstBy = new Map<number, string>();
    const leaks: string[] = [];
    const work = async (who: string, max = Infinity) => {
      for (let n = 0; n < max; n++) {
        const l = await lease(who, deskId);
        if (l.status === 204) return;
        expect(l.status).toBe(201);
        const itemId = l.body.item.id as number;
        const first = firstBy.get(itemId);
        expect(first).not.toBe(who);
        if (first !== undefined) {
          // A second opinion: the answer holds the item and the model's prediction (none here), nothing about the verdict given.
          expect(Object.keys(l.body).sort()).toEqual(['highlights', 'item', 'lease', 'prediction']);
          const text = JSON.stringify(l.body);
          if (text.includes(first) || text.includes('first-note') || /verdict|draw|second/i.test(text))
            leaks.push(text);
        }
        const v = await decide(
          who,
          deskId,
          l.body,
          first === undefined ? 'ok' : 'threat',
          first === undefined ? `first-note ${who}` : undefined,
        );
        expect(v.status).toBe(201);
        if (first === undefined) firstBy.set(itemId, who);
      }
    };
    // One reviewer alone first: every item it marks due is offered to nobody else, and must not come back to it.
    await work(names[0], 40);
    await Promise.all(names.map((n) => work(n)));
    // Opinions that fell due after a reviewer's last lease: one more round each.
    await Promise.all(names.map((n) => work(n)));
    expect(leaks).toEqual([]);

    const leases = await s.db.query<{ item_id: DbInt; reviewer_id: DbInt; draw: string }>(
      null,
      'SELECT item_id, reviewer_id, draw FROM leases WHERE desk_id = $1',
      [deskId],
    );
    // Never the same reviewer twice on one item.
    const pairs = new Set(leases.map((l) => `${l.item_id}:${l.reviewer_id}`));
    expect(pairs.size).toBe(leases.length);
    const second = leases.filter((l) => l.draw === 'second-opinion');
    expect(new Set(second.map((l) => Number(l.item_id))).size).toBe(second.length);
    const due = await s.db.query<{ item_id: DbInt; state: string }>(
      null,
      'SELECT item_id, state FROM second_opinions WHERE desk_id = $1',
      [deskId],
    );
    expect(due.every((d) => d.state === 'done')).toBe(true);
    expect(due.map((d) => Number(d.item_id)).sort((a, b) => a - b)).toEqual(
      second.map((l) => Number(l.item_id)).sort((a, b) => a - b),
    );
    // Each served item has two live verdicts from two reviewers.
    const [{ n }] = await s.db.query<{ n: number | string }>(
      null,
      `SELECT COUNT(*) AS n FROM (SELECT item_id FROM verdicts WHERE desk_id = $1 AND undone_at IS NULL GROUP BY item_id HAVING COUNT(DISTINCT reviewer_id) = 2) t`,
      [deskId],
    );
    expect(Number(n)).toBe(second.length);
    // Binomial(300, 0.2): mean 60, sd ≈ 6.9; ±4 sd (common practice, no source) keeps a false alarm below 1 in 10 000.
    expect(Math.abs(second.length - ITEMS * SHARE)).toBeLessThan(4 * Math.sqrt(ITEMS * SHARE * (1 - SHARE)));
    const progress = await s.call(sup, 'GET', `/api/desks/${deskId}/progress`);
    expect(progress.body.verdicts.byDraw['second-opinion']).toBe(second.length);
  }, 300_000);

  it('hands a returned or expired second opinion to another reviewer, never back to the first, and takes it once', async () => {
    const { deskId } = await deskWithItems(s, sup, ['threat', 'ok'], 1, 'so-one');
    expect((await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { secondOpinionShare: 1 })).status).toBe(200);
    const [a, b, c, d] = names;
    const l1 = (await lease(a, deskId)).body;
    expect((await decide(a, deskId, l1, 'ok')).status).toBe(201);
    expect((await lease(a, deskId)).status).toBe(204);
    const l2 = (await lease(b, deskId)).body;
    expect(l2.item.id).toBe(l1.item.id);
    // Held by b: nobody else gets it meanwhile.
    expect((await lease(c, deskId)).status).toBe(204);
    expect((await s.call(s.tokens[b], 'DELETE', `/api/leases/${l2.lease.id}`)).status).toBe(204);
    // Returned: neither a nor b again, c gets it.
    expect((await lease(a, deskId)).status).toBe(204);
    expect((await lease(b, deskId)).status).toBe(204);
    const l3 = (await lease(c, deskId)).body;
    expect(l3.item.id).toBe(l1.item.id);
    expect(
      (await s.call(s.tokens[c], 'GET', `/api/desks/${deskId}/leases/mine`)).body.leases.map(
        (x: { id: string }) => x.id,
      ),
    ).toEqual([l3.lease.id]);
    // c's lease expires; d takes the item over and gives the opinion; c's late verdict is refused.
    await s.db.query(null, 'UPDATE second_opinions SET leased_until = $1 WHERE item_id = $2', [
      s.db.time(new Date(Date.now() - 1000)),
      l1.item.id,
    ]);
    const l4 = (await lease(d, deskId)).body;
    expect(l4.item.id).toBe(l1.item.id);
    expect((await decide(d, deskId, l4, 'threat')).status).toBe(201);
    const late = await decide(c, deskId, l3, 'ok');
    expect(late.status).toBe(409);
    expect((await lease(c, deskId)).status).toBe(204);
    // Undoing the opinion makes it due again, for a reviewer who has not seen the item.
    const [{ id: vId }] = await s.db.query<{ id: number }>(
      null,
      `SELECT id FROM verdicts WHERE item_id = $1 AND draw = 'second-opinion'`,
      [l1.item.id],
    );
    expect((await s.call(s.tokens[d], 'POST', `/api/verdicts/${vId}/undo`)).status).toBe(201);
    expect((await lease(d, deskId)).status).toBe(204);
    const l5 = (await lease(names[4], deskId)).body;
    expect(l5.item.id).toBe(l1.item.id);
    // The first verdict is untouched and the item never went back to the open pool.
    const [item] = await s.db.query<{ state: string }>(null, 'SELECT state FROM items WHERE id = $1', [l1.item.id]);
    expect(item.state).toBe('decided');
  });
});

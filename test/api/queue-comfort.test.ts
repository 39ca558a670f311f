import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, type Stack } from '../support/stack.js';
import { deskWithItems } from '../support/verdict-rows.js';

describe.each(DATABASE_KINDS)('what a reviewer asks of the queue, on %s', (kind) => {
  let s: Stack;
  let sup = '';
  const names = ['qc-rev0', 'qc-rev1', 'qc-rev2'];

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('qc-sup', 'supervisor');
    for (const n of names) await s.user(n, 'reviewer');
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  const lease = (who: string, deskId: number) => s.call(s.tokens[who], 'POST', `/api/desks/${deskId}/leases`);
  const decide = (who: string, deskId: number, l: { lease: { id: string }; item: { id: number } }, category = 'ok') =>
    s.call(s.tokens[who], 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId: l.lease.id,
      itemId: l.item.id,
      category,
      clientId: `${who}-${l.lease.id}`,
    });
  const skip = (who: string, leaseId: string) => s.call(s.tokens[who], 'DELETE', `/api/leases/${leaseId}?skip=true`);

  it('keeps a skipped item from the reviewer who skipped it, not from the others, until the skip runs out', async () => {
    const { deskId } = await deskWithItems(s, sup, ['threat', 'ok'], 5, 'qc-skip');
    // First draws only: with second opinions on, the other reviewer may rightly be served a decided item first.
    expect((await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { secondOpinionShare: 0 })).status).toBe(200);
    const first = await lease('qc-rev0', deskId);
    expect(first.status).toBe(201);
    const skipped = first.body.item.id as number;
    expect(
      (await s.call(s.tokens['qc-rev0'], 'DELETE', `/api/leases/${first.body.lease.id}?skip=maybe`)).body.message,
    ).toMatch(/skip: expected true or false/);
    expect((await skip('qc-rev0', first.body.lease.id)).status).toBe(204);
    const served: number[] = [];
    for (;;) {
      const l = await lease('qc-rev0', deskId);
      if (l.status === 204) break;
      served.push(l.body.item.id as number);
      expect((await decide('qc-rev0', deskId, l.body)).status).toBe(201);
    }
    expect(served).toHaveLength(4);
    expect(served).not.toContain(skipped);
    // Another reviewer gets it.
    const other = await lease('qc-rev1', deskId);
    expect(other.body.item.id).toBe(skipped);
    expect((await s.call(s.tokens['qc-rev1'], 'DELETE', `/api/leases/${other.body.lease.id}`)).status).toBe(204);
    // The skip is recorded in the audit trail with the return.
    const audit = await s.db.query<{ a: string | null }>(
      null,
      `SELECT "after" AS a FROM audit_events WHERE action = 'lease.return' AND entity_id = $1`,
      [first.body.lease.id],
    );
    expect(JSON.parse(audit[0].a ?? '{}')).toEqual({ itemId: skipped, skip: true });
    // Once the skip has run out (one sign-in session), the item may come back to the reviewer who skipped it.
    const past = new Date(Date.now() - 1000);
    await s.db.write((m) =>
      s.db.query(m, 'UPDATE lease_skips SET skipped_at = $1, expires_at = $2 WHERE item_id = $3', [
        s.db.time(new Date(past.getTime() - 1000)),
        s.db.time(past),
        skipped,
      ]),
    );
    const again = await lease('qc-rev0', deskId);
    expect(again.body.item.id).toBe(skipped);
  });

  it('holds under reviewers skipping and deciding at the same time', async () => {
    const { deskId, itemIds } = await deskWithItems(s, sup, ['threat', 'ok'], 30, 'qc-skip-many');
    // First draws only, so each item's verdicts can be counted.
    expect((await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { secondOpinionShare: 0 })).status).toBe(200);
    const servedAfterSkip: string[] = [];
    const work = async (who: string, k: number) => {
      const mine = new Set<number>();
      for (;;) {
        const l = await lease(who, deskId);
        if (l.status === 204) return;
        expect(l.status).toBe(201);
        const id = l.body.item.id as number;
        if (mine.has(id)) servedAfterSkip.push(`${who} got ${id} again`);
        if (id % 3 === k) {
          mine.add(id);
          expect((await skip(who, l.body.lease.id)).status).toBe(204);
        } else expect((await decide(who, deskId, l.body)).status).toBe(201);
      }
    };
    await Promise.all(names.map((n, k) => work(n, k)));
    expect(servedAfterSkip).toEqual([]);
    // Every item was decided exactly once: each is skipped by one reviewer at most and decided by another.
    const rows = await s.db.query<{ item_id: DbInt; n: DbInt }>(
      null,
      'SELECT item_id, COUNT(*) AS n FROM verdicts WHERE desk_id = $1 GROUP BY item_id',
      [deskId],
    );
    expect(rows).toHaveLength(itemIds.length);
    expect(rows.every((r) => Number(r.n) === 1)).toBe(true);
  });

  it('serves second opinions of simulated verdicts to people only when the desk asks for it', async () => {
    const { deskId } = await deskWithItems(s, sup, ['threat', 'ok'], 10, 'qc-simulated');
    const d = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { secondOpinionShare: 1 });
    expect(d.body.serveSimulatedSecondOpinions).toBe(false);
    const l = await lease('qc-rev0', deskId);
    const v = await decide('qc-rev0', deskId, l.body);
    expect(v.status).toBe(201);
    const itemId = l.body.item.id as number;
    // As if the demo's simulated reviewer had given it.
    await s.db.write((m) =>
      s.db.query(m, 'UPDATE verdicts SET simulated = (1 = 1) WHERE id = $1', [v.body.verdict.id]),
    );
    const off = await lease('qc-rev1', deskId);
    expect(off.status).toBe(201);
    expect(off.body.item.id).not.toBe(itemId);
    expect((await s.call(s.tokens['qc-rev1'], 'DELETE', `/api/leases/${off.body.lease.id}`)).status).toBe(204);
    expect(
      (await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { serveSimulatedSecondOpinions: 'yes' })).body.message.join(
        ' ',
      ),
    ).toMatch(/serveSimulatedSecondOpinions/);
    const on = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { serveSimulatedSecondOpinions: true });
    expect(on.body.serveSimulatedSecondOpinions).toBe(true);
    const second = await lease('qc-rev1', deskId);
    expect(second.body.item.id).toBe(itemId);
  });

  it('refuses to reorder categories once verdicts exist, because the number keys follow the order', async () => {
    const d = await s.call(sup, 'POST', '/api/desks', { name: 'qc-order', categories: ['threat', 'harassment', 'ok'] });
    const deskId = d.body.id as number;
    await s.enrol(deskId);
    // Before any verdict the order may change.
    const before = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { categories: ['harassment', 'threat', 'ok'] });
    expect(before.status).toBe(200);
    await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, JSON.stringify({ text: 'one post' }), {
      'content-type': 'application/x-ndjson',
    });
    let l = await lease('qc-rev0', deskId);
    for (let i = 0; i < 100 && l.status === 204; i++) {
      await new Promise((r) => setTimeout(r, 200));
      l = await lease('qc-rev0', deskId);
    }
    expect((await decide('qc-rev0', deskId, l.body, 'threat')).status).toBe(201);
    const moved = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { categories: ['threat', 'harassment', 'ok'] });
    expect(moved.status).toBe(409);
    expect(moved.body.message).toMatch(/order cannot change once the desk has verdicts.*number keys/);
    // A new category at the end is still welcome; renaming one in use is refused as before.
    const added = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, {
      categories: ['harassment', 'threat', 'ok', 'spam'],
    });
    expect(added.status).toBe(200);
    const renamed = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, {
      categories: ['harassment', 'menace', 'ok', 'spam'],
    });
    expect(renamed.status).toBe(409);
    expect(renamed.body.message).toMatch(/"threat" is used by 1 verdict/);
    const now = await s.call(sup, 'GET', `/api/desks/${deskId}`);
    expect(now.body.categories.map((c: { name: string }) => c.name)).toEqual(['harassment', 'threat', 'ok', 'spam']);
  });

  it('keeps each account’s preferences for itself', async () => {
    const rev = s.tokens['qc-rev0'];
    expect((await s.call(rev, 'GET', '/api/me/preferences')).body).toEqual({
      blurText: false,
      breakReminderMinutes: null,
    });
    const put = await s.call(rev, 'PUT', '/api/me/preferences', { blurText: true, breakReminderMinutes: 45 });
    expect(put.status).toBe(200);
    expect(put.body).toEqual({ blurText: true, breakReminderMinutes: 45 });
    expect((await s.call(rev, 'GET', '/api/me/preferences')).body).toEqual({
      blurText: true,
      breakReminderMinutes: 45,
    });
    expect((await s.call(s.tokens['qc-rev1'], 'GET', '/api/me/preferences')).body.blurText).toBe(false);
    for (const [body, field] of [
      [{ blurText: 'yes', breakReminderMinutes: null }, 'blurText'],
      [{ blurText: true, breakReminderMinutes: 2 }, 'breakReminderMinutes'],
      [{ blurText: true, breakReminderMinutes: 12.5 }, 'breakReminderMinutes'],
      [{ blurText: true }, 'breakReminderMinutes'],
      [{ blurText: true, breakReminderMinutes: null, colour: 'red' }, 'colour'],
    ] as const) {
      const bad = await s.call(rev, 'PUT', '/api/me/preferences', body);
      expect(bad.status).toBe(400);
      expect(JSON.stringify(bad.body.message)).toContain(field);
    }
    // Nothing half-written: the refused bodies left the stored preferences alone.
    expect((await s.call(rev, 'GET', '/api/me/preferences')).body).toEqual({
      blurText: true,
      breakReminderMinutes: 45,
    });
    const off = await s.call(rev, 'PUT', '/api/me/preferences', { blurText: false, breakReminderMinutes: null });
    expect(off.body).toEqual({ blurText: false, breakReminderMinutes: null });
  });
});

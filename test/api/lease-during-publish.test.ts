import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eventually, startStack, type Stack } from '../support/stack.js';

/*
 * Publishing a version rewrites every open item's priority in one
 * transaction, which holds a lock on each of those rows until it commits.
 * A reviewer asking for an item meanwhile must get one once the
 * transaction ends, not "nothing left" (the row locks are skipped by the
 * lease's SKIP LOCKED). PostgreSQL only: SQLite serialises writers.
 */
describe('a lease while every open item is held by another transaction (PostgreSQL)', () => {
  let s: Stack;
  let rev: string;
  let deskId: number;
  beforeAll(async () => {
    s = await startStack('postgres', { worker: true });
    const sup = await s.user('sup', 'supervisor');
    rev = await s.user('rev', 'reviewer');
    deskId = (await s.call(sup, 'POST', '/api/desks', { name: 'held', categories: ['a', 'b'], secondOpinionShare: 0 }))
      .body.id;
    await s.enrol(deskId);
    const body = Array.from({ length: 200 }, (_, i) => JSON.stringify({ text: `post number ${i}` })).join('\n');
    const imp = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, body, {
      'content-type': 'application/x-ndjson',
    });
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
    );
  }, 120_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('waits for the transaction and then leases an item', async () => {
    const holder = new pg.Client({ connectionString: (s.config.database as { url: string }).url });
    await holder.connect();
    try {
      await holder.query('BEGIN');
      const held = await holder.query(
        `UPDATE items SET priority = priority + 1 WHERE desk_id = $1 AND state = 'open'`,
        [deskId],
      );
      expect(held.rowCount).toBe(200);
      const asked = Date.now();
      const pending = s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
      await new Promise((r) => setTimeout(r, 800));
      await holder.query('COMMIT');
      const lease = await pending;
      expect(lease.status).toBe(201);
      expect(Date.now() - asked).toBeGreaterThanOrEqual(700);
    } finally {
      await holder.end();
    }
  });

  it('still answers 204 at once when the pool is truly empty', async () => {
    const sup = s.tokens.sup;
    const empty = (await s.call(sup, 'POST', '/api/desks', { name: 'empty', categories: ['a', 'b'] })).body.id;
    await s.enrol(empty);
    const t0 = Date.now();
    expect((await s.call(rev, 'POST', `/api/desks/${empty}/leases`)).status).toBe(204);
    expect(Date.now() - t0).toBeLessThan(2000);
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { deskWithItems, insertVerdicts, userId } from '../support/verdict-rows.js';

/**
 * Regressions of faults found by probing the API: each answered 500, kept half an import, or answered 200 to a
 * request its neighbour refuses.
 */
describe.each(DATABASE_KINDS)('small faults on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let deskId = 0;
  let itemIds: number[] = [];
  let cat: Record<string, number> = {};

  beforeAll(async () => {
    // Batches of 5 rows: a broken file of 20 rows would have committed three batches before its fault.
    s = await startStack(kind, { env: { IMPORT_BATCH_SIZE: '5' } });
    sup = await s.user('sf-sup', 'supervisor');
    await s.user('sf-rev', 'reviewer');
    const d = await deskWithItems(s, sup, ['threat', 'harassment', 'ok'], 6, 'small faults');
    ({ deskId, itemIds, categoryIds: cat } = d);
    await insertVerdicts(s.db, deskId, [
      { itemId: itemIds[0], reviewerId: await userId(s.db, 'sf-rev'), categoryId: cat.ok },
    ]);
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('refuses with 409 to remove a category that only a settlement uses, and keeps the desk as it was', async () => {
    const settled = await s.call(sup, 'POST', `/api/items/${itemIds[0]}/settle`, {
      category: 'harassment',
      reason: 'Abuse aimed at a neighbour, no threat.',
    });
    expect(settled.status).toBe(201);
    const r = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { categories: ['threat', 'ok'] });
    expect(r.status).toBe(409);
    expect(r.body.message).toMatch(/category "harassment" is used by 1 settlement\(s\)/);
    const desk = await s.call(sup, 'GET', `/api/desks/${deskId}`);
    expect(desk.body.categories.map((c: { name: string }) => c.name)).toEqual(['threat', 'harassment', 'ok']);
    // A category nobody used can still go.
    const ok = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { categories: ['harassment', 'ok'] });
    expect(ok.status).toBe(200);
  });

  it('answers the verdict list with the same 400s as the decision trail', async () => {
    const bad = [
      'category=menace',
      'category=ok&category=abstain',
      'from=yesterday',
      'to=2026-13-01',
      'from=2026-02-01&to=2026-01-01',
      'reviewer=a&reviewer=b',
    ];
    for (const q of bad) {
      const list = await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts?${q}`);
      const trail = await s.call(sup, 'GET', `/api/desks/${deskId}/trail.ndjson?${q}`);
      expect([q, trail.status]).toEqual([q, 400]);
      expect([q, list.status, list.body.message]).toEqual([q, 400, trail.body.message]);
    }
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts?category=menace`)).body.message.join(' ')).toMatch(
      /category: unknown "menace"; this desk has: harassment, ok \(or abstain\)/,
    );
    // Good filters still answer: by category, abstentions, an unknown reviewer (nothing, as in the trail).
    const byCat = await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts?category=ok`);
    expect(byCat.status).toBe(200);
    expect(byCat.body.verdicts.map((v: { itemId: number }) => v.itemId)).toEqual([itemIds[0]]);
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts?category=abstain`)).body.verdicts).toEqual([]);
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts?reviewer=nobody`)).body.verdicts).toEqual([]);
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts?reviewer=sf-rev`)).body.verdicts).toHaveLength(1);
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts?limit=0`)).status).toBe(400);
  });

  const importOf = async (body: string, contentType: string) => {
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, body, { 'content-type': contentType });
    expect(r.status).toBe(202);
    const done = await eventually(
      async () => {
        const x = await s.call(sup, 'GET', `/api/imports/${r.body.importId}`);
        return x.body.state === 'done' || x.body.state === 'failed' ? x.body : undefined;
      },
      30_000,
      'import',
    );
    const landed = await s.db.queryOne<{ n: DbInt }>(null, 'SELECT COUNT(*) AS n FROM items WHERE import_id = $1', [
      r.body.importId,
    ]);
    return { ...done, landed: Number(landed?.n) };
  };

  it('writes nothing of a JSON array that breaks after its first rows', async () => {
    const rows = Array.from({ length: 20 }, (_, i) => JSON.stringify({ text: `A post about the pond, number ${i}` }));
    const cut = `[${rows.join(',')},{"text": "the last one is cut sh`;
    const d = await importOf(cut, 'application/json');
    expect(d).toMatchObject({ state: 'failed', imported: 0, rowsRead: 0, landed: 0 });
    expect(d.failure).toMatch(/row 21: the JSON array is not closed.*nothing was imported/);
    // The same rows in a whole array land, every one: the refusal was about the file, not the rows.
    const whole = await importOf(`[${rows.join(',')}]`, 'application/json');
    expect(whole).toMatchObject({ state: 'done', imported: 20, landed: 20 });
  });

  it('writes nothing of a CSV file whose last quote is never closed', async () => {
    const lines = ['text', ...Array.from({ length: 12 }, (_, i) => `Gate left open by the shed ${i}`)];
    const d = await importOf(`${lines.join('\n')}\n"an open quote that never closes\n`, 'text/csv');
    expect(d).toMatchObject({ state: 'failed', imported: 0, landed: 0 });
    expect(d.failure).toMatch(/nothing was imported/);
  });
});

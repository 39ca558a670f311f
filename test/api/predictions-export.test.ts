import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, type Stack } from '../support/stack.js';
import { webDesk, type WebDesk } from '../support/web-desk.js';

describe.each(DATABASE_KINDS)('the predictions export on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 300, verdicts: 60 });
  }, 180_000);
  afterAll(async () => s?.stop());

  /** Every open item with its prediction, through the paged JSON route the screens use. */
  async function pagedItems() {
    const out: Array<{ id: number; externalId: string; prediction: { set: string[]; call: string; probabilities: Record<string, number> } }> = [];
    for (let cursor: string | null = null; ;) {
      const page: { items: typeof out; nextCursor: string | null } = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/items?limit=500${cursor ? `&cursor=${cursor}` : ''}`)).body;
      out.push(...page.items);
      cursor = page.nextCursor;
      if (!cursor) return out;
    }
  }

  it('streams every open item as CSV (RFC 4180) and NDJSON, agreeing with the items route', async () => {
    const items = await pagedItems();
    expect(items.length).toBeGreaterThan(200);
    const csvRes = await fetch(`${s.base}/api/desks/${desk.deskId}/predictions.csv`, { headers: { authorization: `Bearer ${desk.sup}` } });
    expect(csvRes.status).toBe(200);
    expect(csvRes.headers.get('content-type')).toMatch(/^text\/csv/);
    expect(csvRes.headers.get('content-disposition')).toBe(`attachment; filename="desk-${desk.deskId}-predictions.csv"`);
    const csv = await csvRes.text();
    expect(csv.endsWith('\r\n')).toBe(true);
    const records = parse(csv, { columns: true }) as Array<Record<string, string>>;
    expect(records).toHaveLength(items.length);
    const ndjson = (await (await fetch(`${s.base}/api/desks/${desk.deskId}/predictions.ndjson`, { headers: { authorization: `Bearer ${desk.sup}` } })).text()).trim().split('\n').map((l) => JSON.parse(l));
    expect(ndjson).toHaveLength(items.length);
    for (const [i, item] of items.entries()) {
      expect(Number(records[i]!.item_id)).toBe(item.id);
      expect(records[i]!.set).toBe(item.prediction.set.join('|'));
      expect(records[i]!.call).toBe(item.prediction.call);
      expect(Number(records[i]!.p_threat)).toBeCloseTo(item.prediction.probabilities.threat!, 12);
      expect(ndjson[i]).toMatchObject({ itemId: item.id, externalId: item.externalId, set: item.prediction.set, call: item.prediction.call });
    }
  });

  it('quotes texts with commas, quotes and line breaks so they read back unchanged', async () => {
    const text = 'she said "see you, later"\nat the corner, again';
    const imp = await s.call(desk.sup, 'POST', `/api/desks/${desk.deskId}/imports`, `${JSON.stringify({ text, externalId: 'quoted-1' })}\n`, { 'content-type': 'application/x-ndjson' });
    expect(imp.status).toBe(202);
    await s.waitForQueuesIdle(60_000, { ignoreDelayed: true });
    // Scored by the next version: ask for one.
    const l = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/leases`);
    await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/verdicts`, { leaseId: l.body.lease.id, itemId: l.body.item.id, category: desk.labels.get(l.body.item.externalId) ?? 'ok', clientId: 'quoted-nudge' });
    await s.call(desk.sup, 'PATCH', `/api/desks/${desk.deskId}`, { retrainEvery: 1 });
    const l2 = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/leases`);
    await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/verdicts`, { leaseId: l2.body.lease.id, itemId: l2.body.item.id, category: desk.labels.get(l2.body.item.externalId) ?? 'ok', clientId: 'quoted-nudge-2' });
    for (let i = 0; i < 60; i++) {
      await s.waitForQueuesIdle(60_000);
      const csv = await (await fetch(`${s.base}/api/desks/${desk.deskId}/predictions.csv`, { headers: { authorization: `Bearer ${desk.sup}` } })).text();
      const row = (parse(csv, { columns: true }) as Array<Record<string, string>>).find((r) => r.external_id === 'quoted-1');
      if (row) {
        expect(row.text).toBe(text);
        return;
      }
      await new Promise((r) => setTimeout(r, 500));
    }
    throw new Error('the imported item never appeared in the export');
  });

  it('answers 404 for an unknown desk and an empty export before any model', async () => {
    expect((await s.call(desk.sup, 'GET', '/api/desks/999999/predictions.csv')).status).toBe(404);
    const d = await s.call(desk.sup, 'POST', '/api/desks', { name: 'empty', categories: ['a', 'b'] });
    const r = await fetch(`${s.base}/api/desks/${d.body.id}/predictions.ndjson`, { headers: { authorization: `Bearer ${desk.sup}` } });
    expect(r.status).toBe(200);
    expect(await r.text()).toBe('');
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, type Stack } from '../support/stack.js';
import { deskWithItems, insertVerdicts, userId } from '../support/verdict-rows.js';

describe.each(DATABASE_KINDS)('the item page and the trail’s reviewer filter on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let aud = '';
  let rev = '';
  let deskId = 0;
  let items: number[] = [];

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('ines.marlowe', 'supervisor');
    aud = await s.user('ir-auditor', 'auditor');
    rev = await s.user('Åsa.Lindqvist', 'reviewer');
    await s.user('marek.oduya', 'reviewer');
    await s.user('Wren', 'reviewer');
    const d = await deskWithItems(s, sup, ['threat', 'harassment', 'ok'], 6, 'item pages');
    deskId = d.deskId;
    items = d.itemIds;
    const [asa, marek] = [await userId(s.db, 'Åsa.Lindqvist'), await userId(s.db, 'marek.oduya')];
    const cat = d.categoryIds;
    await insertVerdicts(s.db, deskId, [
      { itemId: items[0], reviewerId: asa, categoryId: cat.ok, draw: 'random', note: 'a fence dispute' },
      { itemId: items[0], reviewerId: marek, categoryId: cat.threat, draw: 'second-opinion' },
      { itemId: items[1], reviewerId: marek, categoryId: cat.harassment, draw: 'seed', undone: true },
      { itemId: items[2], reviewerId: asa, categoryId: null, draw: 'uncertainty' },
    ]);
    const settled = await s.call(sup, 'POST', `/api/items/${items[0]}/settle`, {
      category: 'ok',
      reason: 'read again by the desk',
    });
    expect(settled.status).toBe(201);
  }, 120_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('gives an item’s verdicts with their draws, its settlements and no text', async () => {
    const res = await s.call(aud, 'GET', `/api/items/${items[0]}`);
    expect(res.status).toBe(200);
    expect(res.body).not.toHaveProperty('text');
    expect(res.body).toMatchObject({ id: items[0], deskId, externalId: 'mb-0', erasedAt: null });
    expect(
      res.body.verdicts.map((v: { reviewer: string; category: string; draw: string }) => [
        v.reviewer,
        v.category,
        v.draw,
      ]),
    ).toEqual([
      ['Åsa.Lindqvist', 'ok', 'random'],
      ['marek.oduya', 'threat', 'second-opinion'],
    ]);
    expect(res.body.verdicts[0].note).toBe('a fence dispute');
    expect(res.body.settlements).toHaveLength(1);
    expect(res.body.settlements[0]).toMatchObject({ category: 'ok', settledBy: 'ines.marlowe' });
    // No model yet: no version has a call on it.
    expect(res.body.calls).toEqual([]);
    // An item of no desk is a 404, as is any id the caller's desks do not hold.
    expect((await s.call(aud, 'GET', '/api/items/999999')).status).toBe(404);
    expect((await s.call(rev, 'GET', `/api/items/${items[0]}`)).status).toBe(403);
  });

  it('hands out the text on request and records each read in the audit trail', async () => {
    const auditBefore: number = (await s.call(sup, 'GET', `/api/audit?deskId=${deskId}`)).body.events.filter(
      (e: { action: string }) => e.action === 'item.read',
    ).length;
    const read = await s.call(aud, 'POST', `/api/items/${items[1]}/read`);
    expect(read.status).toBe(200);
    expect(read.body).toEqual({
      itemId: items[1],
      text: 'Mossbank Commons post number 1 about the allotment fence',
      highlights: [],
      erasedAt: null,
    });
    const events = (await s.call(sup, 'GET', `/api/audit?deskId=${deskId}`)).body.events.filter(
      (e: { action: string }) => e.action === 'item.read',
    );
    expect(events).toHaveLength(auditBefore + 1);
    expect(events[0]).toMatchObject({ actor: 'ir-auditor', entityType: 'item', entityId: String(items[1]), deskId });
    expect((await s.call(rev, 'POST', `/api/items/${items[1]}/read`)).status).toBe(403);
  });

  it('shows an erased item as erased, with no text and no read recorded', async () => {
    const erased = await s.call(sup, 'POST', `/api/desks/${deskId}/erasures`, {
      itemIds: [items[2]],
      reason: 'asked by the writer',
    });
    expect(erased.status).toBe(201);
    const page = await s.call(aud, 'GET', `/api/items/${items[2]}`);
    expect(page.status).toBe(200);
    expect(page.body.erasedAt).not.toBeNull();
    expect(page.body.externalId).toBeNull();
    expect(page.body.verdicts).toHaveLength(1);
    const reads = async () =>
      (await s.call(sup, 'GET', `/api/audit?deskId=${deskId}`)).body.events.filter(
        (e: { action: string; entityId: string }) => e.action === 'item.read' && e.entityId === String(items[2]),
      ).length;
    const read = await s.call(aud, 'POST', `/api/items/${items[2]}/read`);
    expect(read.status).toBe(200);
    expect(read.body.text).toBeNull();
    expect(read.body.erasedAt).toBe(page.body.erasedAt);
    await expect(reads()).resolves.toBe(0);
    // The list marks the verdict's item as erased too.
    const list = await s.call(aud, 'GET', `/api/desks/${deskId}/verdicts`);
    const onErased = list.body.verdicts.find((v: { itemId: number }) => v.itemId === items[2]);
    expect(onErased.itemErasedAt).toBe(page.body.erasedAt);
  });

  it('lists verdicts with their draw for oversight, never to the reviewer', async () => {
    const list = await s.call(aud, 'GET', `/api/desks/${deskId}/verdicts`);
    expect(list.body.verdicts.map((v: { draw: string }) => v.draw)).toEqual([
      'uncertainty',
      'seed',
      'second-opinion',
      'random',
    ]);
    const mine = await s.call(rev, 'GET', `/api/desks/${deskId}/verdicts/mine`);
    expect(mine.status).toBe(200);
    for (const v of mine.body.verdicts) expect(v).not.toHaveProperty('draw');
  });

  it('filters by part of a reviewer’s name, in any case, in the list and the export', async () => {
    const names = async (q: string) =>
      (await s.call(aud, 'GET', `/api/desks/${deskId}/verdicts?reviewerMatch=${encodeURIComponent(q)}`)).body.verdicts
        .map((v: { reviewer: string }) => v.reviewer)
        .sort();
    await expect(names('åsa')).resolves.toEqual(['Åsa.Lindqvist', 'Åsa.Lindqvist']);
    await expect(names('ODU')).resolves.toEqual(['marek.oduya', 'marek.oduya']);
    // "a" is in both names; a reviewer without verdicts on the desk (Wren) matches nothing.
    await expect(names('a')).resolves.toHaveLength(4);
    await expect(names('wren')).resolves.toEqual([]);
    const csv = await s.call(aud, 'GET', `/api/desks/${deskId}/trail.ndjson?reviewerMatch=lind`);
    expect(csv.status).toBe(200);
    const lines = String(csv.body).trim().split('\n');
    expect(lines.map((l) => (JSON.parse(l) as { reviewer: string }).reviewer)).toEqual([
      'Åsa.Lindqvist',
      'Åsa.Lindqvist',
    ]);
    const tooLong = await s.call(aud, 'GET', `/api/desks/${deskId}/verdicts?reviewerMatch=${'x'.repeat(101)}`);
    expect(tooLong.status).toBe(400);
    expect(JSON.stringify(tooLong.body)).toContain('reviewerMatch: at most 100 characters');
  });
});

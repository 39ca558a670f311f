import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { insertVerdicts, userId } from '../support/verdict-rows.js';

/** Invented posts of the Mossbank Commons forum: three by one member, one by another, one with no source. */
const ROWS = [
  { external_id: 'mb-101', source: 'member/rowan-oak', text: 'the allotment gate is stuck again, marker-101' },
  { external_id: 'mb-102', source: 'member/rowan-oak', text: 'who keeps parking on the verge, marker-102' },
  { external_id: 'mb-103', source: 'member/rowan-oak', text: 'bake sale on saturday at the hall, marker-103' },
  { external_id: 'mb-104', source: 'member/elm-row', text: 'the band absolutely killed it last night, marker-104' },
  { external_id: 'mb-105', text: 'lost cat near the pond, marker-105' },
];

describe.each(DATABASE_KINDS)('what a desk holds about one subject on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let aud = '';
  let deskId = 0;
  const id: Record<string, number> = {};
  const q = <T = Record<string, unknown>>(sql: string, params: unknown[] = []) => s.db.query<T>(null, sql, params);
  const subject = (query: string, token = sup) => s.call(token, 'GET', `/api/desks/${deskId}/subject?${query}`);

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sub-sup', 'supervisor');
    aud = await s.user('sub-aud', 'auditor');
    await s.user('sub-rev', 'reviewer');
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'subject desk',
      categories: ['threat', 'harassment', 'ok'],
    });
    deskId = d.body.id as number;
    await s.enrol(deskId);
    const imp = await s.call(
      sup,
      'POST',
      `/api/desks/${deskId}/imports`,
      ROWS.map((r) => JSON.stringify(r)).join('\n'),
      {
        'content-type': 'application/x-ndjson',
      },
    );
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
      'import',
    );
    for (const r of await q<{ id: DbInt; external_id: string }>(
      'SELECT id, external_id FROM items WHERE desk_id = $1',
      [deskId],
    ))
      id[r.external_id] = Number(r.id);
    const cats = Object.fromEntries(
      (await q<{ id: DbInt; name: string }>('SELECT id, name FROM categories WHERE desk_id = $1', [deskId])).map(
        (c) => [c.name, Number(c.id)],
      ),
    );
    const rev = await userId(s.db, 'sub-rev');
    await insertVerdicts(s.db, deskId, [
      { itemId: id['mb-101'], reviewerId: rev, categoryId: cats.ok, note: 'reads as harmless' },
      { itemId: id['mb-102'], reviewerId: rev, categoryId: null },
      { itemId: id['mb-104'], reviewerId: rev, categoryId: cats.ok },
    ]);
    await s.db.write(async (m) => {
      await s.db.query(m, `UPDATE items SET state = 'decided' WHERE id IN ($1, $2, $3)`, [
        id['mb-101'],
        id['mb-102'],
        id['mb-104'],
      ]);
      await s.db.query(
        m,
        'INSERT INTO settlements (desk_id, item_id, category_id, settled_by, reason, created_at) VALUES ($1, $2, $3, $4, $5, $6)',
        [
          deskId,
          id['mb-101'],
          cats.harassment,
          await userId(s.db, 'sub-sup'),
          'aimed at a neighbour',
          s.db.time(new Date()),
        ],
      );
    });
  }, 120_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('finds every item of a source with its verdicts and settlements, and audits the read without the selector', async () => {
    const r = await subject('source=member/rowan-oak', aud);
    expect(r.status).toBe(200);
    expect(r.body.selector).toEqual({ source: 'member/rowan-oak' });
    expect(r.body.items.map((i: { id: number }) => i.id)).toEqual([id['mb-101'], id['mb-102'], id['mb-103']]);
    const [first, second, third] = r.body.items;
    expect(first).toMatchObject({
      externalId: 'mb-101',
      source: 'member/rowan-oak',
      text: ROWS[0].text,
      erasedAt: null,
    });
    expect(first.verdicts).toEqual([
      expect.objectContaining({ reviewer: 'sub-rev', category: 'ok', abstain: false, note: 'reads as harmless' }),
    ]);
    expect(first.settlements).toEqual([
      expect.objectContaining({ category: 'harassment', reason: 'aimed at a neighbour', settledBy: 'sub-sup' }),
    ]);
    expect(second.verdicts).toEqual([expect.objectContaining({ category: null, abstain: true })]);
    expect(third.verdicts).toEqual([]);
    const [event] = await q<{ action: string; after: string; actor_name: string }>(
      `SELECT action, after, actor_name FROM audit_events WHERE desk_id = $1 AND action = 'subject.read' ORDER BY id DESC`,
      [deskId],
    );
    expect(event.actor_name).toBe('sub-aud');
    expect(JSON.parse(event.after)).toMatchObject({ by: 'source', items: 3 });
    expect(event.after).not.toContain('rowan-oak');
  });

  it('finds an erased item by its external id and its source, as a tombstone with its verdicts', async () => {
    const e = await s.call(sup, 'POST', `/api/desks/${deskId}/erasures`, { externalIds: ['mb-102'], reason: 'asked' });
    expect(e.status).toBe(201);
    const one = await subject('externalId=mb-102');
    expect(one.status).toBe(200);
    expect(one.body.items).toHaveLength(1);
    expect(one.body.items[0]).toMatchObject({
      id: id['mb-102'],
      externalId: null,
      source: null,
      text: null,
      meta: null,
      erasedBy: 'request',
    });
    expect(one.body.items[0].erasedAt).not.toBeNull();
    expect(one.body.items[0].verdicts).toHaveLength(1);
    expect(JSON.stringify(one.body)).not.toContain('marker-102');
    const all = await subject('source=member/rowan-oak');
    expect(all.body.items.map((i: { id: number }) => i.id)).toEqual([id['mb-101'], id['mb-102'], id['mb-103']]);
    const none = await subject('externalId=mb-999');
    expect(none.body.items).toEqual([]);
  });

  it('answers as a download when asked, never cached', async () => {
    const r = await subject('externalId=mb-104&download=1');
    expect(r.status).toBe(200);
    expect(r.headers.get('content-disposition')).toMatch(/^attachment; filename="desk-\d+-subject-\d{8}T\d{6}\.json"$/);
    expect(r.headers.get('content-type')).toMatch(/application\/json/);
    expect(r.headers.get('cache-control')).toBe('no-store');
    expect(r.body.items[0].text).toBe(ROWS[3].text);
    expect((await subject('externalId=mb-104')).headers.get('content-disposition')).toMatch(/^inline;/);
  });

  it('refuses neither or both selectors, an empty one or a bad download flag with 400; reviewers get 403', async () => {
    const auditsBefore = (await q('SELECT id FROM audit_events WHERE action = $1', ['subject.read'])).length;
    for (const query of [
      '',
      'externalId=mb-101&source=member/elm-row',
      'externalId=',
      'externalId=mb-101&download=yes',
    ]) {
      const r = await subject(query);
      expect(r.status, query).toBe(400);
      expect(JSON.stringify(r.body)).toMatch(/externalId|source|download/);
    }
    expect((await subject('externalId=mb-101', s.tokens['sub-rev'])).status).toBe(403);
    expect((await s.call(sup, 'GET', '/api/desks/99999/subject?externalId=mb-101')).status).toBe(404);
    expect((await q('SELECT id FROM audit_events WHERE action = $1', ['subject.read'])).length).toBe(auditsBefore);
  });
});

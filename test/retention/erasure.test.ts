import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TOMBSTONE_TEXT, type DbInt } from '#database';
import { subjectHash } from '#retention';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { webDesk, type WebDesk } from '../support/web-desk.js';

interface ItemRow {
  id: DbInt;
  text: string;
  external_id: string | null;
  source: string | null;
  meta: string;
  state: string;
  erased_at: unknown;
  erased_by: string | null;
  external_id_hash: string | null;
  source_hash: string | null;
  normalized_text: string;
  normalized_hash: string;
}

describe.each(DATABASE_KINDS)('erasing items on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  /** Erased: a decided item that trained the current version, one that calibrated it, and an open item. */
  const targets: Array<{ id: number; externalId: string; text: string; state: string }> = [];
  let version = 0;
  const before: Record<string, string> = {};
  let verdictsBefore = 0;
  let dfBefore = 0;
  let auditBefore = 0;
  let erasedAt: Date;

  const q = <T = Record<string, unknown>>(sql: string, params: unknown[] = []) => s.db.query<T>(null, sql, params);
  const get = async (path: string) => {
    const r = await fetch(`${s.base}${path}`, { headers: { authorization: `Bearer ${desk.sup}` } });
    expect(r.status).toBe(200);
    return r.text();
  };

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 300, verdicts: 60 });
    version = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
    const [mv] = await q<{ training: string; calibration: string }>(
      'SELECT training, calibration FROM model_versions WHERE desk_id = $1 AND version = $2',
      [desk.deskId, version],
    );
    const trained = (JSON.parse(mv.training) as { itemIds: number[] }).itemIds;
    const calibrated = (JSON.parse(mv.calibration) as { itemIds: number[] }).itemIds;
    expect(trained.length).toBeGreaterThan(0);
    expect(calibrated.length).toBeGreaterThan(0);
    const [open] = await q<{ id: DbInt }>(
      `SELECT id FROM items WHERE desk_id = $1 AND state = 'open' ORDER BY id LIMIT 1`,
      [desk.deskId],
    );
    for (const id of [trained[0], calibrated[0], Number(open.id)]) {
      const [row] = await q<ItemRow>('SELECT * FROM items WHERE id = $1', [id]);
      targets.push({ id, externalId: row.external_id!, text: row.text, state: row.state });
    }
    expect(targets[2].state).toBe('open');
    // Each text is the only one of its kind: finding it later means it was not erased.
    for (const t of targets) {
      const [{ n }] = await q<{ n: DbInt }>('SELECT COUNT(*) AS n FROM items WHERE text LIKE $1', [`%${t.text}%`]);
      expect(Number(n)).toBe(1);
    }
    await eventually(
      async () =>
        (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/models/${version}/report.json`)).status === 200
          ? true
          : undefined,
      60_000,
      'the report',
    );
    before.reportJson = await get(`/api/desks/${desk.deskId}/models/${version}/report.json`);
    before.reportHtml = await get(`/api/desks/${desk.deskId}/models/${version}/report.html`);
    before.model = JSON.stringify((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/models/${version}`)).body);
    before.predictions = await get(`/api/desks/${desk.deskId}/predictions.ndjson`);
    before.trail = await get(`/api/desks/${desk.deskId}/trail.ndjson`);
    verdictsBefore = before.trail.trim().split('\n').length;
    dfBefore = Number(
      (
        await q<{ document_count: DbInt }>('SELECT document_count FROM desk_features WHERE desk_id = $1', [desk.deskId])
      )[0].document_count,
    );
    auditBefore = Number((await q<{ n: DbInt }>('SELECT COUNT(*) AS n FROM audit_events'))[0].n);
    const r = await s.call(desk.sup, 'POST', `/api/desks/${desk.deskId}/erasures`, {
      externalIds: targets.map((t) => t.externalId),
      reason: 'a request under the data-protection law',
    });
    expect(r.status).toBe(201);
    const e = r.body.erasure;
    expect(e).toMatchObject({
      deskId: desk.deskId,
      erasedBy: 'request',
      requestedBy: 'sasha',
      asked: { externalIds: 3, sources: 0, itemIds: 0 },
      erased: 3,
      unlabelled: 1,
      alreadyErased: 0,
    });
    expect(Object.values(e.byCategory as Record<string, number>).reduce((a, b) => a + b, 0)).toBe(2);
    erasedAt = new Date(e.createdAt as string);
  }, 240_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('leaves tombstones: the text, metadata, external id, source and term counts gone, hashes and dates kept', async () => {
    const [{ erasure_salt: salt }] = await q<{ erasure_salt: string }>('SELECT erasure_salt FROM desks WHERE id = $1', [
      desk.deskId,
    ]);
    expect(salt).toMatch(/^[0-9a-f]{64}$/);
    for (const t of targets) {
      const [row] = await q<ItemRow>('SELECT * FROM items WHERE id = $1', [t.id]);
      expect(row.text).toBe(TOMBSTONE_TEXT);
      expect(row.normalized_text).toBe('');
      expect(row.normalized_hash).toBe(`erased:${t.id}`);
      expect(row.meta).toBe('{}');
      expect(row.external_id).toBeNull();
      expect(row.source).toBeNull();
      expect(row.external_id_hash).toBe(subjectHash(salt, t.externalId));
      expect(row.source_hash).toBe(subjectHash(salt, 'board/general'));
      expect(row.erased_by).toBe('request');
      expect(s.db.parseTime(row.erased_at)!.getTime()).toBe(erasedAt.getTime());
      expect(row.state).toBe('decided');
      const counts = await q('SELECT item_id FROM item_term_counts WHERE item_id = $1', [t.id]);
      expect(counts).toEqual([]);
    }
    const [{ document_count }] = await q<{ document_count: DbInt }>(
      'SELECT document_count FROM desk_features WHERE desk_id = $1',
      [desk.deskId],
    );
    expect(Number(document_count)).toBe(dfBefore - 3);
    for (const t of targets) {
      const [{ n }] = await q<{ n: DbInt }>(
        'SELECT COUNT(*) AS n FROM items WHERE text LIKE $1 OR normalized_text LIKE $1 OR meta LIKE $1',
        [`%${t.text.slice(0, 40)}%`],
      );
      expect(Number(n)).toBe(0);
    }
  });

  it('is refused by the database when a tombstone would keep its text', async () => {
    await expect(q(`UPDATE items SET text = 'back again' WHERE id = $1`, [targets[0].id])).rejects.toThrow(
      /ck_items_erased|CHECK/i,
    );
    await expect(q(`UPDATE items SET erased_by = 'someone' WHERE id = $1`, [targets[0].id])).rejects.toThrow(
      /ck_items_erased_by|CHECK/i,
    );
  });

  it('shows tombstones in the trail, drops the open item from the predictions and items routes', async () => {
    const trail = await get(`/api/desks/${desk.deskId}/trail.ndjson`);
    const rows = trail
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l) as { itemId: number; externalId: string | null; itemErasedAt: string | null });
    expect(rows.length).toBe(verdictsBefore);
    const erasedRows = rows.filter((r) => targets.some((t) => t.id === r.itemId));
    expect(erasedRows.length).toBeGreaterThanOrEqual(2);
    for (const r of erasedRows) {
      expect(r.externalId).toBeNull();
      expect(r.itemErasedAt).toBe(erasedAt.toISOString());
    }
    const csv = await get(`/api/desks/${desk.deskId}/trail.csv`);
    expect(csv.split('\r\n')[0].endsWith(',item_erased_at')).toBe(true);
    expect(before.predictions).toContain(JSON.stringify(targets[2].text));
    const predictions = await get(`/api/desks/${desk.deskId}/predictions.ndjson`);
    const csvPredictions = await get(`/api/desks/${desk.deskId}/predictions.csv`);
    const items = await get(`/api/desks/${desk.deskId}/items?limit=500`);
    for (const t of targets)
      for (const text of [trail, csv, predictions, csvPredictions, items]) {
        expect(text).not.toContain(JSON.stringify(t.text).slice(1, -1));
        expect(text).not.toContain(`"${t.externalId}"`);
      }
    const progress = (
      await s.call<{ items: { erased: number }; verdicts: { total: number; undone: number } }>(
        desk.sup,
        'GET',
        `/api/desks/${desk.deskId}/progress`,
      )
    ).body;
    expect(progress.items.erased).toBe(3);
    expect(progress.verdicts.total + progress.verdicts.undone).toBe(verdictsBefore);
  });

  it('leaves the published version and its report unchanged, byte for byte', async () => {
    expect(await get(`/api/desks/${desk.deskId}/models/${version}/report.json`)).toBe(before.reportJson);
    expect(await get(`/api/desks/${desk.deskId}/models/${version}/report.html`)).toBe(before.reportHtml);
    expect(JSON.stringify((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/models/${version}`)).body)).toBe(
      before.model,
    );
    for (const t of targets) expect(before.reportHtml).not.toContain(t.text);
  });

  it('audits the erasure with its counts and reason, never a text or an external id', async () => {
    const events = (
      await q<{ action: string; after: string; desk_id: DbInt }>(
        'SELECT action, after, desk_id FROM audit_events ORDER BY id',
      )
    )
      .slice(auditBefore)
      .filter((e) => e.action === 'erasure.create');
    expect(events.length).toBe(1);
    const last = events[0];
    expect(Number(last.desk_id)).toBe(desk.deskId);
    const after = JSON.parse(last.after) as Record<string, unknown>;
    expect(after).toMatchObject({
      erasedBy: 'request',
      reason: 'a request under the data-protection law',
      asked: { externalIds: 3, sources: 0, itemIds: 0 },
      erased: 3,
      unlabelled: 1,
    });
    for (const t of targets) {
      expect(last.after).not.toContain(t.text);
      expect(last.after).not.toContain(t.externalId);
    }
  });

  it('answers a repeated request with what was erased before, and lists the erasures', async () => {
    const again = await s.call(desk.sup, 'POST', `/api/desks/${desk.deskId}/erasures`, {
      externalIds: targets.map((t) => t.externalId),
      sources: ['no such source'],
      reason: 'asked twice',
    });
    expect(again.status).toBe(201);
    expect(again.body.erasure).toMatchObject({ erased: 0, alreadyErased: 3, byCategory: {}, unlabelled: 0 });
    const list = await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/erasures`);
    expect(list.status).toBe(200);
    expect(list.body.erasures.map((e: { reason: string }) => e.reason)).toEqual([
      'asked twice',
      'a request under the data-protection law',
    ]);
    const aud = await s.user('auditor-2', 'auditor');
    await s.enrol(desk.deskId, ['auditor-2']);
    expect((await s.call(aud, 'GET', `/api/desks/${desk.deskId}/erasures`)).status).toBe(200);
    expect(
      (await s.call(aud, 'POST', `/api/desks/${desk.deskId}/erasures`, { itemIds: [1], reason: 'x' })).status,
    ).toBe(403);
  });

  it('refuses bad requests with 400 or 404 and erases nothing', async () => {
    const [{ n: openBefore }] = await q<{ n: DbInt }>('SELECT COUNT(*) AS n FROM items WHERE erased_at IS NULL');
    const erasuresBefore = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/erasures`)).body.erasures.length;
    const [{ id: liveId }] = await q<{ id: DbInt }>(
      'SELECT id FROM items WHERE desk_id = $1 AND erased_at IS NULL ORDER BY id LIMIT 1',
      [desk.deskId],
    );
    const other = await s.call(desk.sup, 'POST', '/api/desks', { name: 'another desk', categories: ['a', 'b'] });
    const post = (deskId: number, body: unknown) => s.call(desk.sup, 'POST', `/api/desks/${deskId}/erasures`, body);
    expect((await post(999_999, { itemIds: [Number(liveId)], reason: 'r' })).status).toBe(404);
    for (const body of [
      { reason: 'no selector' },
      { externalIds: [], sources: [], itemIds: [], reason: 'empty selectors' },
      { itemIds: [Number(liveId)] },
      { itemIds: [Number(liveId)], reason: '   ' },
      { itemIds: [Number(liveId)], reason: 'x'.repeat(2001) },
      { itemIds: [Number(liveId), 999_999], reason: 'one id is not of this desk' },
      { itemIds: [Number(liveId), -1], reason: 'a negative id' },
      { externalIds: [''], reason: 'an empty external id' },
      { externalIds: ['x'.repeat(201)], reason: 'a long external id' },
      { externalIds: Array.from({ length: 1001 }, (_, i) => `e${i}`), reason: 'too many' },
      { externalIds: 'syn-1', reason: 'not a list' },
      { itemIds: [Number(liveId)], reason: 'an unknown field', everything: true },
    ]) {
      const r = await post(desk.deskId, body);
      expect(r.status, JSON.stringify(body).slice(0, 80)).toBe(400);
    }
    // An item of another desk is not an item of this one.
    expect((await post(other.body.id as number, { itemIds: [Number(liveId)], reason: 'wrong desk' })).status).toBe(400);
    const [{ n: openAfter }] = await q<{ n: DbInt }>('SELECT COUNT(*) AS n FROM items WHERE erased_at IS NULL');
    expect(Number(openAfter)).toBe(Number(openBefore));
    expect((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/erasures`)).body.erasures.length).toBe(
      erasuresBefore,
    );
  });

  it('never serves an erased item again, and refuses a verdict on one held when it was erased', async () => {
    // An item leased to a reviewer, then erased: the lease no longer holds it, and its verdict is refused.
    const other = await s.user('rowan', 'reviewer');
    await s.enrol(desk.deskId, ['rowan']);
    const held = await s.call(other, 'POST', `/api/desks/${desk.deskId}/leases`);
    expect(held.status).toBe(201);
    const byId = await s.call(desk.sup, 'POST', `/api/desks/${desk.deskId}/erasures`, {
      itemIds: [held.body.item.id],
      reason: 'erased while held',
    });
    expect(byId.body.erasure).toMatchObject({ erased: 1, alreadyErased: 0 });
    const mine = await s.call(other, 'GET', `/api/desks/${desk.deskId}/leases/mine`);
    expect(mine.body.leases).toEqual([]);
    const late = await s.call(other, 'POST', `/api/desks/${desk.deskId}/verdicts`, {
      leaseId: held.body.lease.id,
      itemId: held.body.item.id,
      category: 'ok',
      clientId: 'late-1',
    });
    expect(late.status).toBe(409);
    expect(late.body.message).toMatch(/erased/);
    const erasedIds = new Set([...targets.map((t) => t.id), held.body.item.id as number]);
    // Everything else, first draws and second opinions, until nothing is left for this reviewer.
    let served = 0;
    for (;;) {
      const l = await s.call(other, 'POST', `/api/desks/${desk.deskId}/leases`);
      if (l.status === 204) break;
      expect(l.status).toBe(201);
      expect(erasedIds.has(l.body.item.id as number)).toBe(false);
      expect(l.body.item.text).not.toBe(TOMBSTONE_TEXT);
      served++;
      const v = await s.call(other, 'POST', `/api/desks/${desk.deskId}/verdicts`, {
        leaseId: l.body.lease.id,
        itemId: l.body.item.id,
        category: desk.labels.get(l.body.item.externalId as string) ?? 'ok',
        clientId: `rest-${served}`,
      });
      expect(v.status).toBe(201);
    }
    expect(served).toBeGreaterThan(200);
  }, 300_000);

  it('trains and calibrates a later version without the erased items', async () => {
    await eventually(
      async () => {
        const v = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
        return v > version ? v : undefined;
      },
      180_000,
      'a version trained after the erasure',
    );
    await s.waitForQueuesIdle(180_000);
    const latest = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
    const [mv] = await q<{ training: string; calibration: string }>(
      'SELECT training, calibration FROM model_versions WHERE desk_id = $1 AND version = $2',
      [desk.deskId, latest],
    );
    const trained = (JSON.parse(mv.training) as { itemIds: number[] }).itemIds;
    const calibrated = (JSON.parse(mv.calibration) as { itemIds: number[] }).itemIds;
    expect(trained.length).toBeGreaterThan(100);
    for (const t of targets) {
      expect(trained).not.toContain(t.id);
      expect(calibrated).not.toContain(t.id);
    }
  }, 400_000);
});

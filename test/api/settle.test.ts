import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SETTLEMENT_REASON_MAX, type DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';
import { deskWithItems, insertVerdicts, userId, type VerdictRow } from '../support/verdict-rows.js';

describe.each(DATABASE_KINDS)('disagreements and settling on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let auditor = '';
  let rev = '';

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('set-sup', 'supervisor');
    auditor = await s.user('set-aud', 'auditor');
    rev = await s.user('set-rev', 'reviewer');
    await s.user('set-rev2', 'reviewer');
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  describe('the disagreement list', () => {
    let deskId = 0;
    const item: Record<string, number> = {};

    beforeAll(async () => {
      const d = await deskWithItems(s, sup, ['threat', 'harassment', 'ok'], 60, 'disagreements');
      deskId = d.deskId;
      const [r1, r2] = [await userId(s.db, 'set-rev'), await userId(s.db, 'set-rev2')];
      const cat = d.categoryIds;
      'ABCDEFGH'.split('').forEach((k, i) => (item[k] = d.itemIds[i]!));
      const sure = (set: string[], version: number) => ({
        modelVersion: version,
        shownSet: set,
        shownCall: set.length === 1 ? ('sure' as const) : ('ambiguous' as const),
      });
      const rows: VerdictRow[] = [
        { itemId: item.A, reviewerId: r1, categoryId: cat.ok },
        { itemId: item.A, reviewerId: r2, categoryId: cat.threat, draw: 'second-opinion' }, // reviewers differ
        { itemId: item.B, reviewerId: r1, categoryId: cat.ok },
        { itemId: item.B, reviewerId: r2, categoryId: cat.ok, draw: 'second-opinion' }, // agree
        { itemId: item.C, reviewerId: r1, categoryId: cat.threat, ...sure(['ok'], 1) }, // against a sure call of a healthy version
        { itemId: item.D, reviewerId: r1, categoryId: cat.ok, ...sure(['ok'], 1) }, // with the sure call
        { itemId: item.E, reviewerId: r1, categoryId: cat.threat, ...sure(['ok'], 2) }, // against a sure call of a version that misses
        { itemId: item.F, reviewerId: r1, categoryId: cat.ok },
        { itemId: item.F, reviewerId: r2, categoryId: cat.threat, undone: true }, // the dissent was undone
        { itemId: item.G, reviewerId: r1, categoryId: null },
        { itemId: item.G, reviewerId: r2, categoryId: cat.ok }, // an abstention is no disagreement
        { itemId: item.H, reviewerId: r1, categoryId: cat.harassment, ...sure(['ok', 'harassment'], 1) }, // ambiguous call
      ];
      // Version 2's random checks miss 30 times out of 30 (Wilson upper bound far below 0.9): its coverage is not healthy.
      // Version 1's ten random checks all hit.
      for (let i = 20; i < 50; i++)
        rows.push({
          itemId: d.itemIds[i],
          reviewerId: r1,
          categoryId: cat.harassment,
          draw: 'random',
          modelVersion: 2,
          shownSet: ['ok', 'threat'],
          shownCall: 'ambiguous',
        });
      for (let i = 50; i < 60; i++)
        rows.push({
          itemId: d.itemIds[i],
          reviewerId: r1,
          categoryId: cat.ok,
          draw: 'random',
          modelVersion: 1,
          shownSet: ['ok', 'threat'],
          shownCall: 'ambiguous',
        });
      await insertVerdicts(s.db, deskId, rows);
    });

    it('lists items with differing live verdicts and verdicts against sure calls of healthy versions, paged', async () => {
      const res = await s.call(auditor, 'GET', `/api/desks/${deskId}/disagreements`);
      expect(res.status).toBe(200);
      expect(res.body.disagreements.map((x: { item: { id: number } }) => x.item.id)).toEqual([item.A, item.C]);
      const [a, c] = res.body.disagreements;
      expect(a.reasons).toEqual([{ kind: 'reviewers-differ', categories: ['ok', 'threat'] }]);
      expect(
        a.verdicts.map((v: { reviewer: string; category: string; draw: string }) => [v.reviewer, v.category, v.draw]),
      ).toEqual([
        ['set-rev', 'ok', 'uncertainty'],
        ['set-rev2', 'threat', 'second-opinion'],
      ]);
      expect(a.item.externalId).toBe('mb-0');
      expect(a.settled).toBeNull();
      expect(c.reasons).toEqual([
        {
          kind: 'against-sure-call',
          verdictId: c.verdicts[0].id,
          modelVersion: 1,
          shownSet: ['ok'],
          category: 'threat',
        },
      ]);
      // Pages of one: A, then C, then nothing.
      const p1 = (await s.call(sup, 'GET', `/api/desks/${deskId}/disagreements?limit=1`)).body;
      expect(p1.disagreements.map((x: { item: { id: number } }) => x.item.id)).toEqual([item.A]);
      const p2 = (await s.call(sup, 'GET', `/api/desks/${deskId}/disagreements?limit=1&after=${p1.next}`)).body;
      expect(p2.disagreements.map((x: { item: { id: number } }) => x.item.id)).toEqual([item.C]);
      const p3 = (await s.call(sup, 'GET', `/api/desks/${deskId}/disagreements?limit=1&after=${p2.next}`)).body;
      expect(p3).toEqual({ disagreements: [], next: null });
      expect((await s.call(sup, 'GET', `/api/desks/${deskId}/disagreements?limit=0`)).status).toBe(400);
      expect((await s.call(sup, 'GET', '/api/desks/9999/disagreements')).status).toBe(404);
      expect((await s.call(rev, 'GET', `/api/desks/${deskId}/disagreements`)).status).toBe(403);
    });

    it('settles: supervisor only, clear 400/404/409, re-settling keeps the history, audited', async () => {
      const url = `/api/items/${item.A}/settle`;
      const good = { category: 'threat', reason: 'Names a time and place: a credible threat.' };
      expect((await s.call(rev, 'POST', url, good)).status).toBe(403);
      expect((await s.call(auditor, 'POST', url, good)).status).toBe(403);
      const bad = async (body: unknown, status = 400) => {
        const r = await s.call(sup, 'POST', url, body);
        expect(r.status).toBe(status);
        return String(Array.isArray(r.body.message) ? r.body.message.join(' | ') : r.body.message);
      };
      expect(await bad({ category: 'threat' })).toMatch(/reason/);
      expect(await bad({ category: 'threat', reason: '   ' })).toMatch(/reason/);
      expect(await bad({ category: 'threat', reason: 'x'.repeat(SETTLEMENT_REASON_MAX + 1) })).toMatch(/reason/);
      expect(await bad({ category: 'menace', reason: 'r' })).toMatch(
        /unknown category "menace".*threat, harassment, ok/,
      );
      expect(await bad({ category: 'abstain', reason: 'r' })).toMatch(/abstain cannot be a settled label/);
      expect(await bad({ reason: 'r' })).toMatch(/category/);
      expect(await bad({ ...good, deskId: deskId + 1 })).toMatch(/another desk/);
      expect(await bad({ ...good, extra: 1 })).toMatch(/extra/);
      expect((await s.call(sup, 'POST', '/api/items/999999/settle', good)).status).toBe(404);
      expect((await s.call(sup, 'POST', '/api/items/abc/settle', good)).status).toBe(400);
      // An item nobody decided has nothing to settle.
      const undecided = (
        await s.db.query<{ id: number }>(
          null,
          'SELECT id FROM items WHERE desk_id = $1 AND state = $2 AND id NOT IN (SELECT item_id FROM verdicts) ORDER BY id LIMIT 1',
          [deskId, 'open'],
        )
      )[0].id;
      expect((await s.call(sup, 'POST', `/api/items/${undecided}/settle`, good)).status).toBe(409);

      const first = await s.call(sup, 'POST', url, { ...good, deskId });
      expect(first.status).toBe(201);
      expect(first.body.settlement).toMatchObject({
        itemId: item.A,
        category: 'threat',
        reason: good.reason,
        settledBy: 'set-sup',
      });
      const second = await s.call(sup, 'POST', url, {
        category: 'harassment',
        reason: '  On reflection: abuse, no threat.  ',
      });
      expect(second.status).toBe(201);
      expect(second.body.settlement.reason).toBe('On reflection: abuse, no threat.');
      const list = (await s.call(sup, 'GET', `/api/desks/${deskId}/disagreements`)).body.disagreements;
      const a = list.find((x: { item: { id: number } }) => x.item.id === item.A);
      expect(a.settled).toMatchObject({ category: 'harassment', settledBy: 'set-sup' });
      expect(a.settlements.map((x: { category: string }) => x.category)).toEqual(['threat', 'harassment']);
      // Every verdict is still in the list: settling removes none.
      expect(a.verdicts).toHaveLength(2);
      const events = (await s.call(auditor, 'GET', `/api/audit?deskId=${deskId}`)).body.events.filter(
        (e: { action: string }) => e.action === 'item.settle',
      );
      expect(events).toHaveLength(2);
      expect(events[0]).toMatchObject({ entityType: 'item', entityId: String(item.A), actor: 'set-sup' });
      expect(events[0].before).toMatchObject({ category: 'threat' });
      expect(events[0].after).toMatchObject({ category: 'harassment', reason: 'On reflection: abuse, no threat.' });
    });
  });

  it('trains and calibrates the next model version on the settled label, never on a second opinion', async () => {
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'settle-loop',
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['hurt', 'find you'], harassment: ['idiot'] },
      randomShare: 0.3,
      secondOpinionShare: 0,
      retrainEvery: 1000,
      retrainAfterSeconds: 1,
    });
    const deskId = d.body.id as number;
    await s.enrol(deskId);
    const pool = syntheticPool(300, 3);
    const labels = new Map(pool.map((p) => [p.externalId, p.label]));
    const imp = await s.call(
      sup,
      'POST',
      `/api/desks/${deskId}/imports`,
      pool.map((p) => JSON.stringify({ text: p.text, external_id: p.externalId })).join('\n'),
      { 'content-type': 'application/x-ndjson' },
    );
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
    );
    for (let i = 0; i < 80; i++) {
      // A publish holds the pool's rows for a moment (PostgreSQL skips locked rows and may answer 204): ask again.
      const l = (
        await eventually(
          async () => {
            const r = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
            return r.status === 201 ? r : undefined;
          },
          30_000,
          'a lease',
        )
      ).body;
      expect(
        (
          await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
            leaseId: l.lease.id,
            itemId: l.item.id,
            category: labels.get(l.item.externalId),
            clientId: `sl-${i}`,
          })
        ).status,
      ).toBe(201);
    }
    const latest = () =>
      s.db.queryOne<{
        version: number;
        state: string;
        training: string;
        calibration: string;
        verdict_watermark: DbInt;
      }>(
        null,
        'SELECT version, state, training, calibration, verdict_watermark FROM model_versions WHERE desk_id = $1 ORDER BY version DESC LIMIT 1',
        [deskId],
      );
    // Until a published version has learned from every verdict given above.
    const [{ last }] = await s.db.query<{ last: DbInt | null }>(
      null,
      'SELECT MAX(id) AS last FROM verdicts WHERE desk_id = $1',
      [deskId],
    );
    const before = await eventually(
      async () => {
        const v = await latest();
        return v && v.state === 'published' && Number(v.verdict_watermark) === Number(last) ? v : undefined;
      },
      120_000,
      'a version that learned from every verdict',
    );
    await s.waitForQueuesIdle(120_000);
    expect(before.state).toBe('published');
    const tr0 = JSON.parse(before.training) as { counts: Record<string, number>; itemIds: number[] };
    const ca0 = JSON.parse(before.calibration) as { counts: Record<string, number>; itemIds: number[] };
    const labelOf = async (id: number) =>
      (
        await s.db.query<{ name: string }>(
          null,
          'SELECT c.name FROM verdicts v JOIN categories c ON c.id = v.category_id WHERE v.item_id = $1 AND v.undone_at IS NULL',
          [id],
        )
      )[0].name;
    const other = (c: string) => (c === 'ok' ? 'harassment' : 'ok');
    const [x, z] = tr0.itemIds;
    const y = ca0.itemIds[0];
    const [lx, ly, lz] = [await labelOf(x), await labelOf(y), await labelOf(z)];
    // A second opinion on z that differs: it must not change z's label.
    const catIds = Object.fromEntries(
      (
        await s.db.query<{ id: DbInt; name: string }>(null, 'SELECT id, name FROM categories WHERE desk_id = $1', [
          deskId,
        ])
      ).map((c) => [c.name, Number(c.id)]),
    );
    await insertVerdicts(s.db, deskId, [
      {
        itemId: z,
        reviewerId: await userId(s.db, 'set-rev2'),
        categoryId: catIds[other(lz)],
        draw: 'second-opinion',
      },
    ]);
    expect(
      (await s.call(sup, 'POST', `/api/items/${x}/settle`, { category: other(lx), reason: 'settled for the test' }))
        .status,
    ).toBe(201);
    expect(
      (await s.call(sup, 'POST', `/api/items/${y}/settle`, { category: other(ly), reason: 'settled for the test' }))
        .status,
    ).toBe(201);
    const after = await eventually(
      async () => {
        // The version found above exists: there is a latest one.
        const v = (await latest())!;
        return v.version > before.version && v.state === 'published' ? v : undefined;
      },
      120_000,
      'a version trained after the settlements',
    );
    const tr1 = JSON.parse(after.training) as {
      counts: Record<string, number>;
      itemIds: number[];
      settledItemIds: number[];
    };
    const ca1 = JSON.parse(after.calibration) as {
      counts: Record<string, number>;
      itemIds: number[];
      settledItemIds: number[];
      draws: Record<string, number>;
    };
    const moved = (counts: Record<string, number>, from: string, to: string) => ({
      ...counts,
      [from]: counts[from] - 1,
      [to]: (counts[to] ?? 0) + 1,
    });
    // Training: x moved to its settled label, z kept its original label.
    expect(tr1.itemIds).toEqual(tr0.itemIds);
    expect(tr1.settledItemIds).toEqual([x]);
    expect(tr1.counts).toEqual(moved(tr0.counts, lx, other(lx)));
    // Calibration: y is still a calibration item (settling keeps its draw), with its settled label.
    expect(ca1.itemIds).toEqual(ca0.itemIds);
    expect(ca1.settledItemIds).toEqual([y]);
    expect(ca1.counts).toEqual(moved(ca0.counts, ly, other(ly)));
    expect(Object.keys(ca1.draws)).toEqual(['random']);
  }, 300_000);
});

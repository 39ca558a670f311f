import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import type { DbInt } from '#database';

describe.each(DATABASE_KINDS)('the review queue on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let rev: string;
  let rev2: string;

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    rev = await s.user('rev', 'reviewer');
    rev2 = await s.user('rev2', 'reviewer');
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  /** A desk with the given texts imported; returns its id. */
  async function desk(name: string, texts: string[], settings: Record<string, unknown> = {}): Promise<number> {
    // No second opinions unless a test asks: these tests follow first draws item by item.
    const r = await s.call(sup, 'POST', '/api/desks', {
      name,
      categories: ['threat', 'harassment', 'ok'],
      secondOpinionShare: 0,
      ...settings,
    });
    expect(r.status).toBe(201);
    await s.enrol(r.body.id);
    const body = texts.map((text) => JSON.stringify({ text })).join('\n');
    const imp = await s.call(sup, 'POST', `/api/desks/${r.body.id}/imports`, body, {
      'content-type': 'application/x-ndjson',
    });
    await eventually(async () =>
      (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
    );
    return r.body.id;
  }

  const lease = (token: string, deskId: number) => s.call(token, 'POST', `/api/desks/${deskId}/leases`);
  /** What a lease answer holds that a verdict refers to. */
  interface Grant {
    lease: { id: string };
    item: { id: number };
  }
  const decide = (token: string, deskId: number, l: Grant, extra: Record<string, unknown>) =>
    s.call(token, 'POST', `/api/desks/${deskId}/verdicts`, { leaseId: l.lease.id, itemId: l.item.id, ...extra });

  it('serves seed-term matches first, ranked by matches, with highlights, then says 204 when empty', async () => {
    const id = await desk(
      'seeds',
      ['a calm post', 'I will hurt you, I will find you', 'I will hurt you', 'another calm post'],
      {
        seedTerms: { threat: ['hurt you', 'find you'] },
        randomShare: 0,
      },
    );
    const first = await lease(rev, id);
    expect(first.status).toBe(201);
    expect(first.body.item.text).toBe('I will hurt you, I will find you');
    expect(first.body.highlights).toEqual([
      { start: 7, end: 15, category: 'threat' },
      { start: 24, end: 32, category: 'threat' },
    ]);
    expect(first.body.prediction).toBeNull();
    expect(first.body).not.toHaveProperty('draw');
    expect(JSON.stringify(first.body)).not.toMatch(/seed"|random"|uncertainty/);
    const second = await lease(rev, id);
    expect(second.body.item.text).toBe('I will hurt you');
    // No seed match is left: the cold start goes on with uniform picks, still recorded as seed draws
    // (they train the first model; only the random share calibrates).
    const third = await lease(rev, id);
    const fourth = await lease(rev, id);
    expect(new Set([third.body.item.text, fourth.body.item.text])).toEqual(
      new Set(['a calm post', 'another calm post']),
    );
    expect((await lease(rev, id)).status).toBe(204);
    const draws = await s.db.query<{ draw: string }>(
      null,
      'SELECT draw FROM leases WHERE desk_id = $1 ORDER BY created_at, id',
      [id],
    );
    expect(draws.map((d) => d.draw)).toEqual(['seed', 'seed', 'seed', 'seed']);
  });

  it('matches any ending of a seed term ending in *, marking the whole word, and refuses one letter before *', async () => {
    const id = await desk('endings', ['ett lugnt inlägg', 'Han hotar oss', 'De hotade och HOTAR igen'], {
      seedTerms: { threat: ['hota*'] },
      randomShare: 0,
    });
    const first = await lease(rev, id);
    expect(first.body.item.text).toBe('De hotade och HOTAR igen');
    expect(first.body.highlights).toEqual([
      { start: 3, end: 9, category: 'threat' },
      { start: 14, end: 19, category: 'threat' },
    ]);
    expect((await lease(rev, id)).body.item.text).toBe('Han hotar oss');
    for (const [method, path, body] of [
      ['POST', '/api/desks', { name: 'endings-bad', categories: ['threat', 'ok'], seedTerms: { threat: ['h*'] } }],
      ['PATCH', `/api/desks/${id}`, { seedTerms: { threat: ['hota*', 'h *'] } }],
    ] as const) {
      const r = await s.call(sup, method, path, body);
      expect(r.status).toBe(400);
      expect(String(r.body.message)).toMatch(/seedTerms\.threat: "h ?\*" ends in \* after a single character/);
    }
    expect((await s.call(sup, 'GET', `/api/desks/${id}`)).body.seedTerms).toEqual({ threat: ['hota*'] });
  });

  it('records a verdict once: a replayed clientId returns the stored verdict with 200 and writes nothing', async () => {
    const id = await desk('replay', ['one', 'two']);
    const l = (await lease(rev, id)).body;
    const v1 = await decide(rev, id, l, { category: 'ok', clientId: 'k-1', elapsedMs: 4200, note: 'fine' });
    expect(v1.status).toBe(201);
    expect(v1.body.verdict).toMatchObject({
      category: 'ok',
      abstain: false,
      elapsedMs: 4200,
      note: 'fine',
      modelVersion: null,
      shownSet: null,
      shownCall: null,
    });
    const v2 = await decide(rev, id, l, { category: 'ok', clientId: 'k-1', elapsedMs: 4200 });
    expect(v2.status).toBe(200);
    expect(v2.body.verdict.id).toBe(v1.body.verdict.id);
    const [{ n }] = await s.db.query<{ n: string | number }>(
      null,
      'SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1',
      [id],
    );
    expect(Number(n)).toBe(1);
    const reuse = await decide(rev, id, (await lease(rev, id)).body, { category: 'ok', clientId: 'k-1' });
    expect(reuse.status).toBe(409);
    expect(reuse.body.message).toMatch(/already used/);
  });

  it('refuses bad verdicts with clear messages', async () => {
    const id = await desk('bad', ['x1', 'x2']);
    const l: Grant = (await lease(rev, id)).body;
    const unknown = await decide(rev, id, l, { category: 'spam', clientId: 'b-1' });
    expect(unknown.status).toBe(400);
    expect(unknown.body.message).toMatch(/unknown category "spam".*threat, harassment, ok/);
    const both = await decide(rev, id, l, { category: 'ok', abstain: true, clientId: 'b-2' });
    expect(both.status).toBe(400);
    const neither = await decide(rev, id, l, { clientId: 'b-3' });
    expect(neither.status).toBe(400);
    expect(neither.body.message).toMatch(/exactly one of/);
    const foreign = await decide(rev2, id, l, { category: 'ok', clientId: 'b-4' });
    expect(foreign.status).toBe(403);
    const wrongItem = await s.call(rev, 'POST', `/api/desks/${id}/verdicts`, {
      leaseId: l.lease.id,
      itemId: l.item.id + 1,
      category: 'ok',
      clientId: 'b-5',
    });
    expect(wrongItem.status).toBe(400);
    const noClient = await s.call(rev, 'POST', `/api/desks/${id}/verdicts`, {
      leaseId: l.lease.id,
      itemId: l.item.id,
      category: 'ok',
    });
    expect(noClient.status).toBe(400);
    const abstain = await decide(rev, id, l, { abstain: true, clientId: 'b-6' });
    expect(abstain.status).toBe(201);
    expect(abstain.body.verdict).toMatchObject({ category: null, abstain: true });
  });

  it('returns an expired lease to the queue; a late verdict counts only if nobody else holds the item', async () => {
    const id = await desk('expiry', ['only item']);
    const l1 = (await lease(rev, id)).body;
    expect((await lease(rev2, id)).status).toBe(204);
    // Expire the lease by moving its time back (the shortest real lease is 30 s).
    const past = s.db.time(new Date(Date.now() - 1000));
    await s.db.query(null, 'UPDATE items SET leased_until = $1 WHERE id = $2', [past, l1.item.id]);
    await s.db.query(null, 'UPDATE leases SET expires_at = $1, created_at = $2 WHERE id = $3', [
      past,
      s.db.time(new Date(Date.now() - 60_000)),
      l1.lease.id,
    ]);
    // Expired but nobody took it: the late verdict is accepted.
    const late = await decide(rev, id, l1, { category: 'ok', clientId: 'late-1' });
    expect(late.status).toBe(201);

    const id2 = await desk('expiry2', ['contested item']);
    const a = (await lease(rev, id2)).body;
    await s.db.query(null, 'UPDATE items SET leased_until = $1 WHERE id = $2', [past, a.item.id]);
    const b = await lease(rev2, id2);
    expect(b.status).toBe(201);
    expect(b.body.item.id).toBe(a.item.id);
    const refused = await decide(rev, id2, a, { category: 'ok', clientId: 'late-2' });
    expect(refused.status).toBe(409);
    expect(refused.body.message).toMatch(/another reviewer holds it/);
    expect((await decide(rev2, id2, b.body, { category: 'threat', clientId: 'late-3' })).status).toBe(201);
  });

  it('hands an item back with DELETE, and only its holder may', async () => {
    const id = await desk('giveback', ['give me back']);
    const l = (await lease(rev, id)).body;
    expect((await s.call(rev2, 'DELETE', `/api/leases/${l.lease.id}`)).status).toBe(403);
    expect((await s.call(rev, 'DELETE', `/api/leases/${l.lease.id}`)).status).toBe(204);
    // A verdict on the lease handed back is refused, whether or not someone took the item since.
    const late = await decide(rev, id, l, { category: 'ok', clientId: 'giveback-late' });
    expect(late.status).toBe(409);
    expect(late.body.message).toMatch(/handed back; your verdict was not recorded/);
    const again = await lease(rev2, id);
    expect(again.body.item.id).toBe(l.item.id);
    expect((await decide(rev, id, l, { category: 'ok', clientId: 'giveback-later' })).status).toBe(409);
    expect((await s.call(sup, 'GET', `/api/desks/${id}/verdicts`)).body.verdicts).toEqual([]);
  });

  it('lets the author undo their last verdict within the window; the item returns to the queue and the trail keeps both', async () => {
    const id = await desk('undo', ['u1', 'u2', 'u3']);
    const l1 = (await lease(rev, id)).body;
    const v1 = (await decide(rev, id, l1, { category: 'ok', clientId: 'u-1' })).body.verdict;
    const l2 = (await lease(rev, id)).body;
    const v2 = (await decide(rev, id, l2, { category: 'harassment', clientId: 'u-2' })).body.verdict;
    expect((await s.call(rev, 'POST', `/api/verdicts/${v1.id}/undo`)).body.message).toMatch(/only your last verdict/);
    expect((await s.call(rev2, 'POST', `/api/verdicts/${v2.id}/undo`)).status).toBe(403);
    const undone = await s.call(rev, 'POST', `/api/verdicts/${v2.id}/undo`);
    expect(undone.status).toBe(201);
    expect(undone.body.verdict.undoneAt).not.toBeNull();
    expect((await s.call(rev, 'POST', `/api/verdicts/${v2.id}/undo`)).status).toBe(409);
    // The item is back: someone gets it again, and can decide it.
    const served: number[] = [];
    for (;;) {
      const r = await lease(rev2, id);
      if (r.status === 204) break;
      served.push(r.body.item.id);
    }
    expect(served).toContain(l2.item.id);
    const trail = await s.call(sup, 'GET', `/api/audit?deskId=${id}`);
    expect(
      trail.body.events.map((e: { action: string }) => e.action).filter((a: string) => a.startsWith('verdict.')),
    ).toEqual(['verdict.undo', 'verdict.create', 'verdict.create']);
    // Past the window: move the verdict's time back.
    const l3 = (await lease(rev, await desk('undo2', ['w1']))).body;
    const dId = l3
      ? (await s.db.query<{ desk_id: DbInt }>(null, 'SELECT desk_id FROM leases WHERE id = $1', [l3.lease.id]))[0]
          .desk_id
      : 0;
    const v3 = (await decide(rev, Number(dId), l3, { category: 'ok', clientId: 'u-3' })).body.verdict;
    await s.db.query(null, 'UPDATE verdicts SET created_at = $1 WHERE id = $2', [
      s.db.time(new Date(Date.now() - 6 * 60_000)),
      v3.id,
    ]);
    const tooLate = await s.call(rev, 'POST', `/api/verdicts/${v3.id}/undo`);
    expect(tooLate.status).toBe(409);
    expect(tooLate.body.message).toMatch(/undo window of 5 minutes/);
  });

  it('reopens the same item for the same reviewer on an undo with reopen=true, under the draw it was served by', async () => {
    const id = await desk('reopen', ['r1', 'r2', 'r3'], { randomShare: 1 });
    const since = new Date(Date.now() - 1000).toISOString();
    const count = async () =>
      (await s.call(rev, 'GET', `/api/desks/${id}/verdicts/mine/count?since=${encodeURIComponent(since)}`)).body
        .count as number;
    const l1 = (await lease(rev, id)).body;
    const v1 = (await decide(rev, id, l1, { category: 'threat', clientId: 'ro-1' })).body.verdict;
    expect(await count()).toBe(1);
    const undone = await s.call(rev, 'POST', `/api/verdicts/${v1.id}/undo?reopen=true`);
    expect(undone.status).toBe(201);
    expect(undone.body.verdict.undoneAt).not.toBeNull();
    expect(undone.body.lease.item.id).toBe(l1.item.id);
    expect(await count()).toBe(0);
    // Held for this reviewer: another reviewer is served the other items, never this one.
    const others: number[] = [];
    for (;;) {
      const r = await lease(rev2, id);
      if (r.status === 204) break;
      others.push(r.body.item.id);
    }
    expect(others).toHaveLength(2);
    expect(others).not.toContain(l1.item.id);
    const [row] = await s.db.query<{ draw: string; reviewer_id: DbInt }>(
      null,
      'SELECT draw, reviewer_id FROM leases WHERE id = $1',
      [undone.body.lease.lease.id],
    );
    // A correction of a random draw is still a random draw: it still calibrates.
    expect(row.draw).toBe('random');
    const v2 = await decide(rev, id, undone.body.lease, { category: 'ok', clientId: 'ro-2' });
    expect(v2.status).toBe(201);
    expect(v2.body.verdict).toMatchObject({ itemId: l1.item.id, category: 'ok', undoneAt: null });
    expect(await count()).toBe(1);
    // Without reopen the answer holds no lease; a bad value is a 400; since is required.
    const plain = await s.call(rev, 'POST', `/api/verdicts/${v2.body.verdict.id}/undo`);
    expect(plain.status).toBe(201);
    expect(plain.body).not.toHaveProperty('lease');
    expect((await s.call(rev, 'POST', `/api/verdicts/${v2.body.verdict.id}/undo?reopen=yes`)).status).toBe(400);
    const noSince = await s.call(rev, 'GET', `/api/desks/${id}/verdicts/mine/count`);
    expect(noSince.status).toBe(400);
    expect(noSince.body.message).toMatch(/since/);
  });

  it('reports progress: items by state, verdicts by category and draw, active reviewers', async () => {
    const id = await desk('progress', ['p1', 'p2', 'p3', 'p4'], { randomShare: 1 });
    const a = (await lease(rev, id)).body;
    await decide(rev, id, a, { category: 'threat', clientId: 'p-1' });
    const b = (await lease(rev2, id)).body;
    await decide(rev2, id, b, { abstain: true, clientId: 'p-2' });
    await lease(rev, id);
    const p = await s.call(rev, 'GET', `/api/desks/${id}/progress`);
    expect(p.status).toBe(200);
    expect(p.body.items).toEqual({ total: 4, open: 1, leased: 1, decided: 2, erased: 0 });
    expect(p.body.verdicts).toMatchObject({
      total: 2,
      byCategory: { threat: 1 },
      abstain: 1,
      byDraw: { random: 2, seed: 0, uncertainty: 0, 'second-opinion': 0 },
    });
    expect(p.body.reviewersActiveLastHour).toBe(2);
    expect(p.body.reviewers).toBeUndefined();
    const ps = await s.call(sup, 'GET', `/api/desks/${id}/progress`);
    expect(ps.body.reviewers.map((r: { name: string; verdicts: number }) => [r.name, r.verdicts])).toEqual([
      ['rev', 1],
      ['rev2', 1],
    ]);
  });

  it('draws the random share within its binomial tolerance', async () => {
    const texts = Array.from({ length: 400 }, (_, i) => `seed match hurt you number ${i}`);
    const id = await desk('share', texts, { seedTerms: { threat: ['hurt you'] }, randomShare: 0.3 });
    for (let i = 0; i < 400; i++) expect((await lease(rev, id)).status).toBe(201);
    const rows = await s.db.query<{ draw: string; n: string | number }>(
      null,
      'SELECT draw, COUNT(*) AS n FROM leases WHERE desk_id = $1 GROUP BY draw',
      [id],
    );
    const random = Number(rows.find((r) => r.draw === 'random')?.n ?? 0);
    // Binomial(400, 0.3): mean 120, sd ≈ 9.2; ±4 sd (common practice, no source) keeps a false alarm below 1 in 10 000.
    expect(Math.abs(random - 120)).toBeLessThan(4 * Math.sqrt(400 * 0.3 * 0.7));
  });

  it('validates desk settings with clear 400s and keeps used categories', async () => {
    const bad = await s.call(sup, 'POST', '/api/desks', {
      name: 'bad',
      categories: ['only'],
      coverageTarget: 0.9999,
      calibration: 'per-class',
      randomShare: 2,
      leaseSeconds: 5,
    });
    expect(bad.status).toBe(400);
    expect(bad.body.message.join(' | ')).toMatch(
      /categories must contain at least 2 elements.*coverageTarget.*calibration must be one of.*randomShare.*leaseSeconds/,
    );
    const seedBad = await s.call(sup, 'POST', '/api/desks', {
      name: 'bad2',
      categories: ['a', 'b'],
      seedTerms: { c: ['x'] },
    });
    expect(seedBad.status).toBe(400);
    expect(seedBad.body.message.join(' ')).toMatch(/seedTerms.c: not a category/);
    const id = await desk('cats', ['c1']);
    const l = (await lease(rev, id)).body;
    await decide(rev, id, l, { category: 'threat', clientId: 'cat-1' });
    const rename = await s.call(sup, 'PATCH', `/api/desks/${id}`, { categories: ['menace', 'harassment', 'ok'] });
    expect(rename.status).toBe(409);
    expect(rename.body.message).toMatch(/"threat" is used by 1 verdict/);
    const add = await s.call(sup, 'PATCH', `/api/desks/${id}`, {
      categories: ['threat', 'harassment', 'ok', 'spam'],
      coverageTarget: 0.95,
    });
    expect(add.status).toBe(200);
    expect(add.body.categories.map((c: { name: string }) => c.name)).toEqual(['threat', 'harassment', 'ok', 'spam']);
    const drop = await s.call(sup, 'PATCH', `/api/desks/${id}`, { categories: ['threat', 'harassment', 'ok'] });
    expect(drop.status).toBe(200);
    const trail = await s.call(sup, 'GET', `/api/audit?deskId=${id}`);
    const upd = trail.body.events.find(
      (e: { action: string; after: Record<string, unknown> }) =>
        e.action === 'desk.update' && 'coverageTarget' in e.after,
    );
    expect(upd.before).toMatchObject({ coverageTarget: 0.9 });
    expect(upd.after).toMatchObject({ coverageTarget: 0.95 });
  });
});

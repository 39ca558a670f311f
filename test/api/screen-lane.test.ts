import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { answerFromLabels, importRows, type Answered } from '../support/labelled-desk.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const RANDOM_SHARE = 0.2;
const LEASES = 120;

/**
 * |observed − n·p| within four binomial standard deviations: a draw this far
 * off happens by chance about once in 16 000 runs (normal approximation).
 */
function withinBinomial(observed: number, n: number, p: number): void {
  const sd = Math.sqrt(n * p * (1 - p));
  expect(Math.abs(observed - n * p)).toBeLessThanOrEqual(4 * sd);
}

describe.each(DATABASE_KINDS)('the review lane on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let rev: string;
  let deskId: number;
  let version: number;
  const coldStart: Answered[] = [];

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    rev = await s.user('rev', 'reviewer');
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'lane',
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['hurt', 'find you'], harassment: ['idiot'] },
      watch: ['threat'],
      secondOpinionShare: 0,
      randomShare: RANDOM_SHARE,
      retrainEvery: 24,
      retrainAfterSeconds: 1,
    });
    expect(d.status).toBe(201);
    expect(d.body.screenShare).toBe(0.5);
    deskId = d.body.id;
    await s.enrol(deskId);
    const pool = syntheticPool(300, 23);
    await importRows(
      s,
      sup,
      deskId,
      pool.map((p) => ({ text: p.text, external_id: p.externalId })),
    );
    const labels = new Map(pool.map((p) => [p.externalId, p.label as string]));
    await answerFromLabels(s, deskId, [rev], labels, (a) => a.length >= 24, coldStart);
    await eventually(
      async () => (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.currentModelVersion ?? undefined,
      120_000,
      'a first version',
    );
    await s.waitForQueuesIdle(120_000);
    // Nothing learns from here on: the lane's order stays that of one version.
    await s.stopWorker();
    // Let the desk settings cache (2 s) see the last version.
    await new Promise((r) => setTimeout(r, 2100));
    version = (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.currentModelVersion;
  }, 300_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  /** Leases `n` items one after the other, handing each back; the draws recorded with the leases. */
  async function drawMany(n: number): Promise<Array<{ draw: string; itemId: number }>> {
    const out: Array<{ draw: string; itemId: number }> = [];
    for (let i = 0; i < n; i++) {
      const l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
      expect(l.status).toBe(201);
      // The reviewer is never told the draw.
      expect(JSON.stringify(l.body)).not.toMatch(/"draw"|screen|uncertainty|random/);
      const [{ draw }] = await s.db.query<{ draw: string }>(null, 'SELECT draw FROM leases WHERE id = $1', [
        l.body.lease.id,
      ]);
      out.push({ draw, itemId: l.body.item.id });
      expect((await s.call(rev, 'DELETE', `/api/leases/${l.body.lease.id}`)).status).toBe(204);
    }
    return out;
  }

  it('leaves the cold start as it was', () => {
    const beforeVersion = coldStart.filter((a) => a.shown === null);
    expect(beforeVersion.length).toBeGreaterThan(0);
    expect(beforeVersion.every((a) => ['seed', 'random'].includes(a.draw))).toBe(true);
  });

  it('mixes random, screen and uncertainty draws as the shares say, the lane serving the likeliest threat first', async () => {
    const draws = await drawMany(LEASES);
    const count = (k: string) => draws.filter((d) => d.draw === k).length;
    expect(count('random') + count('screen') + count('uncertainty')).toBe(LEASES);
    withinBinomial(count('random'), LEASES, RANDOM_SHARE);
    withinBinomial(count('screen'), LEASES, 0.5);
    withinBinomial(count('uncertainty'), LEASES, 1 - RANDOM_SHARE - 0.5);

    // Each item is handed back, so the lane serves its head every time: the flagged item most likely a threat.
    const flagged: Array<{ id: number }> = [];
    let after: string | null = null;
    do {
      const page: { body: { items: Array<{ id: number }>; next: string | null } } = await s.call(
        sup,
        'GET',
        `/api/desks/${deskId}/items?lane=flagged&limit=200${after === null ? '' : `&after=${after}`}`,
      );
      flagged.push(...page.body.items);
      after = page.body.next;
    } while (after !== null);
    expect(flagged.length).toBeGreaterThan(0);
    const probs = new Map(
      (
        await s.db.query<{ item_id: number | string; probabilities: string }>(
          null,
          'SELECT item_id, probabilities FROM predictions WHERE desk_id = $1 AND model_version = $2',
          [deskId, version],
        )
      ).map((r) => [Number(r.item_id), (JSON.parse(r.probabilities) as number[])[0]]),
    );
    const top = Math.max(...flagged.map((f) => probs.get(f.id)!));
    const served = new Set(draws.filter((d) => d.draw === 'screen').map((d) => d.itemId));
    expect(served.size).toBe(1);
    const [head] = [...served];
    expect(flagged.map((f) => f.id)).toContain(head);
    expect(probs.get(head)).toBe(top);
  });

  it('follows a new share at once, and a verdict on a screen draw is recorded as one', async () => {
    const r = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { screenShare: 0.8 });
    expect(r.status).toBe(200);
    expect(r.body.screenShare).toBe(0.8);
    const draws = await drawMany(40);
    expect(draws.filter((d) => d.draw === 'uncertainty').length).toBe(0);
    withinBinomial(draws.filter((d) => d.draw === 'screen').length, 40, 0.8);

    // Lease until a screen draw comes (four in five do), then decide it.
    let l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    for (let tries = 0; ; tries++) {
      const [{ draw }] = await s.db.query<{ draw: string }>(null, 'SELECT draw FROM leases WHERE id = $1', [
        l.body.lease.id,
      ]);
      if (draw === 'screen') break;
      expect(tries).toBeLessThan(30);
      await s.call(rev, 'DELETE', `/api/leases/${l.body.lease.id}`);
      l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    }
    const v = await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId: l.body.lease.id,
      itemId: l.body.item.id,
      category: 'threat',
      clientId: 'screen-verdict',
    });
    expect(v.status).toBe(201);
    const [row] = await s.db.query<{ draw: string }>(null, 'SELECT draw FROM verdicts WHERE item_id = $1', [
      l.body.item.id,
    ]);
    expect(row.draw).toBe('screen');

    // Without a watched category the lane is closed.
    expect((await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { watch: [] })).status).toBe(200);
    const closed = await drawMany(12);
    expect(closed.some((d) => d.draw === 'screen')).toBe(false);
  });

  it('refuses shares out of range or adding up to more than one, and changes nothing', async () => {
    const before = (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body;
    for (const [body, pattern] of [
      [{ screenShare: 1.5 }, /screenShare must not be greater than 1/],
      [{ screenShare: -0.1 }, /screenShare must not be less than 0/],
      [{ screenShare: 0.9 }, /randomShare \+ screenShare may not exceed 1 \(got 0.2 \+ 0.9\)/],
      [{ randomShare: 0.5, screenShare: 0.6 }, /randomShare \+ screenShare may not exceed 1/],
    ] as const) {
      const r = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, body);
      expect(r.status).toBe(400);
      expect(JSON.stringify(r.body.message)).toMatch(pattern);
    }
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}`)).body).toEqual(before);
    const c = await s.call(sup, 'POST', '/api/desks', {
      name: 'too much',
      categories: ['a', 'b'],
      randomShare: 0.7,
      screenShare: 0.5,
    });
    expect(c.status).toBe(400);
    const fits = await s.call(sup, 'POST', '/api/desks', {
      name: 'mostly random',
      categories: ['a', 'b'],
      randomShare: 0.7,
    });
    expect(fits.status).toBe(201);
    expect(fits.body.screenShare).toBeCloseTo(0.3, 12);
  });
});

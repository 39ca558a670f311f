import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { trainingConditionalRank } from '#learning';
import { DATABASE_KINDS } from '../support/databases.js';
import { answerFromLabels, importRows, screeningDesk, SCREENING_CATEGORIES } from '../support/labelled-desk.js';
import { startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const CATEGORIES = SCREENING_CATEGORIES;

interface StoredScores {
  perCategory: { lac: number[][] };
  heldOut?: { lac: number[][] };
}

/** `all` without one occurrence of each value of `part`, ascending. */
function without(all: number[], part: number[]): number[] {
  const rest = [...all].sort((a, b) => a - b);
  for (const v of part) rest.splice(rest.indexOf(v), 1);
  return rest;
}

describe.each(DATABASE_KINDS)('screening settings on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let deskId: number;
  let version: number;
  let scores: StoredScores;

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    const reviewers = [await s.user('rev0', 'reviewer'), await s.user('rev1', 'reviewer')];
    deskId = await screeningDesk(s, sup, 'screening settings', {
      seedTerms: { threat: ['hurt', 'find you'], harassment: ['idiot'] },
    });
    const pool = syntheticPool(1500, 11);
    await importRows(
      s,
      sup,
      deskId,
      pool.map((p) => ({ text: p.text, external_id: p.externalId })),
    );
    const labels = new Map(pool.map((p) => [p.externalId, p.label as string]));
    await answerFromLabels(s, deskId, reviewers, labels, (a) => a.filter((x) => x.draw === 'random').length >= 320);
    await new Promise((r) => setTimeout(r, 1000));
    await s.waitForQueuesIdle(180_000);
    // Nothing learns from here on: any change of thresholds or sets comes from the settings alone.
    await s.stopWorker();
    version = (await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.currentModelVersion;
    expect(version).not.toBeNull();
    const [row] = await s.db.query<{ calibration: string }>(
      null,
      'SELECT calibration FROM model_versions WHERE desk_id = $1 AND version = $2',
      [deskId, version],
    );
    scores = (JSON.parse(row.calibration) as { scores: StoredScores }).scores;
  }, 600_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('refuses unknown categories, targets out of range and watching on a marginal desk, and changes nothing', async () => {
    const before = (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body;
    for (const [body, pattern] of [
      [{ watch: ['weather'] }, /watch: "weather" is not a category of this desk/],
      [{ coverageTargets: { weather: 0.9 } }, /coverageTargets.weather: not a category of this desk/],
      [{ coverageTargets: { threat: 0.4 } }, /coverageTargets.threat: a target must be a number from 0.5 to 0.999/],
      [{ coverageTargets: { threat: 1 } }, /coverageTargets.threat: a target must be a number from 0.5 to 0.999/],
      [{ coverageTargets: { threat: '0.9' } }, /coverageTargets.threat: a target must be a number/],
      [{ coverageTargets: ['threat'] }, /coverageTargets must be an object/],
      [{ confidence: 0.3 }, /confidence must not be less than 0.5/],
      [{ confidence: 1 }, /confidence must not be greater than 0.999/],
      [{ watch: 'threat' }, /watch must be an array/],
      [{ calibration: 'marginal', watch: ['threat'] }, /marginal calibration gives no promise per category/],
      [{ calibration: 'marginal', coverageTargets: { threat: 0.95 } }, /a target per category needs calibration/],
    ] as const) {
      const r = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, body);
      expect(r.status, JSON.stringify(body)).toBe(400);
      expect(r.body.message.join(' ')).toMatch(pattern);
    }
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}`)).body).toEqual(before);

    const created = await s.call(sup, 'POST', '/api/desks', {
      name: 'marginal watch',
      categories: ['spam', 'ham'],
      calibration: 'marginal',
      watch: ['spam'],
    });
    expect(created.status).toBe(400);
    expect(created.body.message.join(' ')).toMatch(/marginal calibration gives no promise per category/);
    expect((await s.call(sup, 'GET', '/api/desks')).body.desks.map((x: { name: string }) => x.name)).not.toContain(
      'marginal watch',
    );

    // A desk that watches a category cannot turn marginal; one that stops watching in the same change can.
    const other = await s.call(sup, 'POST', '/api/desks', {
      name: 'watching',
      categories: ['spam', 'ham'],
      watch: ['spam'],
      coverageTargets: { spam: 0.95 },
    });
    expect(other.status).toBe(201);
    expect(other.body).toMatchObject({ watch: ['spam'], coverageTargets: { spam: 0.95 }, confidence: null });
    const refused = await s.call(sup, 'PATCH', `/api/desks/${other.body.id}`, { calibration: 'marginal' });
    expect(refused.status).toBe(400);
    expect(refused.body.message.join(' ')).toMatch(/watch: marginal calibration/);
    const turned = await s.call(sup, 'PATCH', `/api/desks/${other.body.id}`, {
      calibration: 'marginal',
      watch: [],
      coverageTargets: {},
    });
    expect(turned.status).toBe(200);
    expect(turned.body).toMatchObject({ calibration: 'marginal', watch: [], coverageTargets: {} });
  });

  it('gives a watched category its own target from the kept calibration scores, without retraining', async () => {
    const t = CATEGORIES.indexOf('threat');
    const patched = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, {
      watch: ['threat'],
      coverageTargets: { threat: 0.95 },
    });
    expect(patched.status).toBe(200);
    expect(patched.body).toMatchObject({ watch: ['threat'], coverageTargets: { threat: 0.95 }, confidence: null });
    const status = patched.body.calibrationStatus;
    expect(status.modelVersion).toBe(version);
    const byName = Object.fromEntries(status.thresholds.map((x: { category: string }) => [x.category, x])) as Record<
      string,
      { target: number; threshold: number | null; n: number; heldOut: number; needMore: number }
    >;

    // The watched category leaves its estimation fold out; the rank is ⌈(n + 1)(1 − α)⌉ (Angelopoulos & Bates 2021).
    const all = scores.perCategory.lac[t];
    const out = scores.heldOut!.lac[t];
    expect(out.length).toBeGreaterThan(0);
    const kept = without(all, out);
    const rank = Math.ceil((kept.length + 1) * 0.95 - 1e-9);
    expect(byName.threat).toMatchObject({ target: 0.95, n: kept.length, heldOut: out.length });
    if (rank <= kept.length) expect(byName.threat.threshold).toBe(kept[rank - 1]);
    else expect(byName.threat.threshold).toBeNull();
    // Unwatched categories keep every score and the desk's target.
    for (const name of ['harassment', 'ok']) {
      const c = CATEGORIES.indexOf(name);
      const sorted = [...scores.perCategory.lac[c]].sort((a, b) => a - b);
      expect(byName[name]).toMatchObject({ target: 0.9, n: sorted.length, heldOut: 0 });
      expect(byName[name].threshold).toBe(sorted[Math.ceil((sorted.length + 1) * 0.9 - 1e-9) - 1]);
    }

    // Every open item's set follows the new thresholds (LAC: c is in the set when 1 − p_c ≤ q̂_c).
    const items = (await s.call(sup, 'GET', `/api/desks/${deskId}/items?limit=500`)).body.items as Array<{
      prediction: { probabilities: Record<string, number>; set: string[] };
    }>;
    expect(items.length).toBe(500);
    for (const item of items)
      for (const name of CATEGORIES) {
        const q = byName[name].threshold ?? Number.POSITIVE_INFINITY;
        expect(item.prediction.set.includes(name)).toBe(1 - item.prediction.probabilities[name] <= q + 1e-12);
      }
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.currentModelVersion).toBe(version);
  });

  it('reads training-conditional thresholds when a confidence is set', async () => {
    const patched = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { confidence: 0.9 });
    expect(patched.status).toBe(200);
    const status = patched.body.calibrationStatus;
    expect(status.confidence).toBe(0.9);
    for (const x of status.thresholds as Array<{
      category: string;
      target: number;
      threshold: number | null;
      n: number;
      heldOut: number;
      needMore: number;
    }>) {
      const c = CATEGORIES.indexOf(x.category);
      const all = scores.perCategory.lac[c];
      const kept = x.category === 'threat' ? without(all, scores.heldOut!.lac[c]) : [...all].sort((a, b) => a - b);
      const rank = trainingConditionalRank(kept.length, 1 - x.target, 0.9);
      if (rank <= kept.length) {
        expect(x.threshold).toBe(kept[rank - 1]);
        expect(x.needMore).toBe(0);
      } else {
        expect(x.threshold).toBeNull();
        expect(x.needMore).toBeGreaterThan(0);
      }
      // Never below the expected-coverage rank.
      expect(rank).toBeGreaterThanOrEqual(Math.ceil((kept.length + 1) * (x.target === 0.95 ? 0.95 : 0.9) - 1e-9));
    }
    const back = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { confidence: null });
    expect(back.body.confidence).toBeNull();
    expect(back.body.calibrationStatus.confidence).toBeNull();
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.currentModelVersion).toBe(version);
  });
});

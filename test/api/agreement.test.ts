import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { alphaBootstrap, cohenKappa, createRng, fleissKappa, krippendorffAlpha } from '#learning';
import { AGREEMENT_BOOTSTRAP_SEED } from '#verdicts';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, type Stack } from '../support/stack.js';
import { deskWithItems, insertVerdicts, userId, type VerdictRow } from '../support/verdict-rows.js';

const CATEGORIES = ['threat', 'harassment', 'ok'];
const REVIEWERS = ['ash', 'birch', 'cedar', 'dogwood'];
const TOL = 1e-12;

describe.each(DATABASE_KINDS)('agreement between reviewers on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let auditor = '';
  let deskId = 0;
  // What the test wrote: live category verdicts per item, by reviewer name.
  const live = new Map<number, Map<string, string>>();

  beforeAll(async () => {
    s = await startStack(kind, { worker: true });
    sup = await s.user('rowan', 'supervisor');
    auditor = await s.user('oversight', 'auditor');
    for (const r of REVIEWERS) await s.user(r, 'reviewer');
    const desk = await deskWithItems(s, sup, CATEGORIES, 80);
    deskId = desk.deskId;
    const ids = Object.fromEntries(await Promise.all(REVIEWERS.map(async (r) => [r, await userId(s.db, r)] as const)));
    const rng = createRng(11);
    const rows: VerdictRow[] = [];
    for (const itemId of desk.itemIds) {
      // 1 to 4 reviewers per item; a "true" category that each reviewer follows 70 % of the time.
      const k = 1 + Math.floor(rng.next() * 4);
      const truth = CATEGORIES[Math.floor(rng.next() * 3)];
      for (const r of REVIEWERS.slice(0, k)) {
        const roll = rng.next();
        if (roll < 0.08) {
          rows.push({ itemId, reviewerId: ids[r], categoryId: null });
          continue;
        }
        const cat = roll < 0.7 ? truth : CATEGORIES[Math.floor(rng.next() * 3)];
        if (roll > 0.95) {
          // An undone verdict, then its live replacement: only the replacement counts.
          rows.push({
            itemId,
            reviewerId: ids[r],
            categoryId: desk.categoryIds[cat === 'ok' ? 'threat' : 'ok'],
            undone: true,
          });
        }
        rows.push({ itemId, reviewerId: ids[r], categoryId: desk.categoryIds[cat] });
        const m = live.get(itemId) ?? new Map<string, string>();
        m.set(r, cat);
        live.set(itemId, m);
      }
    }
    await insertVerdicts(s.db, deskId, rows);
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('equals the coefficients computed here from the same verdicts', async () => {
    const res = await s.call(auditor, 'GET', `/api/desks/${deskId}/agreement`);
    expect(res.status).toBe(200);
    const a = res.body;
    const items = [...live.entries()]
      .filter(([, m]) => m.size >= 2)
      .sort((x, y) => x[0] - y[0])
      .map(([, m]) => m);
    expect(a.items).toBe(items.length);
    expect(a.verdicts).toBe(items.reduce((n, m) => n + m.size, 0));
    expect(a.reviewers).toBe(REVIEWERS.length);

    // Cohen's kappa for every pair that shares items.
    for (let i = 0; i < REVIEWERS.length; i++) {
      for (let j = i + 1; j < REVIEWERS.length; j++) {
        const [x, y] = [REVIEWERS[i], REVIEWERS[j]];
        const shared = items.filter((m) => m.has(x) && m.has(y));
        const pair = a.cohen.find((p: { reviewers: string[] }) => p.reviewers[0] === x && p.reviewers[1] === y);
        if (shared.length === 0) {
          expect(pair).toBeUndefined();
          continue;
        }
        const k = cohenKappa(
          shared.map((m) => m.get(x)!),
          shared.map((m) => m.get(y)!),
        );
        expect(pair.items).toBe(shared.length);
        expect(Math.abs(pair.kappa - k.kappa)).toBeLessThan(TOL);
      }
    }

    // Fleiss' kappa over the items with the most common number of verdicts.
    const sizes = new Map<number, number>();
    for (const m of items) sizes.set(m.size, (sizes.get(m.size) ?? 0) + 1);
    const modal = [...sizes.entries()].sort((p, q) => q[1] - p[1] || q[0] - p[0])[0][0];
    const used = items.filter((m) => m.size === modal);
    const f = fleissKappa(used.map((m) => CATEGORIES.map((c) => [...m.values()].filter((v) => v === c).length)));
    expect(a.fleiss.verdictsPerItem).toBe(modal);
    expect(a.fleiss.items).toBe(used.length);
    expect(a.fleiss.itemsLeftOut).toBe(items.length - used.length);
    expect(Math.abs(a.fleiss.kappa - f.kappa)).toBeLessThan(TOL);
    expect(a.fleiss.unequalVerdicts).toMatch(/most common number/);
    CATEGORIES.forEach((c, j) => expect(Math.abs(a.perCategory[j].fleissKappa - f.perCategory[j])).toBeLessThan(TOL));

    // Krippendorff's alpha over every item, reviewers as observers, abstentions missing.
    const table = items.map((m) => REVIEWERS.map((r) => m.get(r) ?? null));
    const alpha = krippendorffAlpha(table);
    expect(Math.abs(a.krippendorff.alpha - alpha.alpha)).toBeLessThan(TOL);
    expect(a.krippendorff.pairableValues).toBe(alpha.pairableValues);
    const boot = alphaBootstrap(table, { rng: createRng(AGREEMENT_BOOTSTRAP_SEED) });
    expect(a.krippendorff.interval.seed).toBe(AGREEMENT_BOOTSTRAP_SEED);
    expect(a.krippendorff.interval.resamples).toBe(1000);
    expect(Math.abs(a.krippendorff.interval.lower - boot.lower)).toBeLessThan(TOL);
    expect(Math.abs(a.krippendorff.interval.upper - boot.upper)).toBeLessThan(TOL);
    expect(a.krippendorff.interval.lower).toBeLessThan(a.krippendorff.alpha);
    expect(a.krippendorff.interval.upper).toBeGreaterThan(a.krippendorff.alpha);
  });

  it('gives byte-identical JSON for the same data', async () => {
    const one = await fetch(`${s.base}/api/desks/${deskId}/agreement`, {
      headers: { authorization: `Bearer ${sup}` },
    }).then((r) => r.text());
    const two = await fetch(`${s.base}/api/desks/${deskId}/agreement`, {
      headers: { authorization: `Bearer ${sup}` },
    }).then((r) => r.text());
    expect(one).toBe(two);
    expect(one.length).toBeGreaterThan(200);
  });

  it('answers 404 for an unknown desk and 403 for a reviewer', async () => {
    expect((await s.call(sup, 'GET', '/api/desks/9999/agreement')).status).toBe(404);
    expect((await s.call(s.tokens.ash, 'GET', `/api/desks/${deskId}/agreement`)).status).toBe(403);
  });
});

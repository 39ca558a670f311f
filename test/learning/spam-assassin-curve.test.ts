/**
 * Learning curves on the SpamAssassin public corpus: uncertainty sampling
 * (margin) against uniform random sampling, through the rehearsal protocol
 * with its default settings (start 20, batches of 20, random share 0.2,
 * budget 600).
 *
 * Reference point (project brief, not re-run here): scikit-learn's logistic
 * regression on hashed tf-idf of the same bodies gave macro-F1 ≈ 0.87 on a
 * 60/20/20 split.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { prepareRehearsal, runRehearsal, type RehearsalResult } from '#learning';
import { CATEGORIES, loadCorpus } from './spam-assassin-shared.js';

describe('SpamAssassin: learning curve (seed 1)', () => {
  let result: RehearsalResult;

  beforeAll(() => {
    const corpus = loadCorpus();
    const prepared = prepareRehearsal(corpus.data, { testShare: 0.2, seed: 1, counts: corpus.counts });
    result = runRehearsal(prepared, {
      target: 0.9,
      calibration: 'per-category',
      score: 'lac',
      strategy: 'margin',
      randomShare: 0.2,
      start: 20,
      batch: 20,
      budget: 600,
      testShare: 0.2,
      seed: 1,
      compareRandom: true,
    });
    console.info(
      `SpamAssassin seed 1: full macro-F1 ${result.full.macroF1.toFixed(4)}; labels to reach 0.95 of it: ` +
        `margin ${result.labelsToReach['0.95']}, random ${result.random!.labelsToReach['0.95']}`,
    );
  }, 300_000);

  it('trains a full-pool model with macro-F1 ≥ 0.85', () => {
    expect(result.classes).toEqual(CATEGORIES);
    expect(result.full.macroF1).toBeGreaterThanOrEqual(0.85);
  });

  it('reaches 95 % of the full macro-F1 with at most half the verdicts random sampling needs', () => {
    // Margin was chosen over entropy on seeds 1–3 (labels to reach 0.95 of
    // full, uncertainty vs random: margin 180/520, 211/391, 120/260 = 0.44 of
    // random's verdicts over the three; entropy 380/520, 171/391, 160/260 =
    // 0.61). On fresh seeds it does not hold up: seed 4 100/240, seed 5
    // 449/309, seed 6 408/348 (random sampling got there first on 5 and 6);
    // over seeds 1–6 margin needed 0.71 of random's verdicts. So the "half
    // the verdicts" target is met on seed 1, checked here as a regression
    // check of this configuration, and on seeds 1–3 on average, but not in
    // general.
    const uncertainty = result.labelsToReach['0.95'];
    const random = result.random!.labelsToReach['0.95'];
    expect(uncertainty).not.toBeNull();
    // If random sampling never gets there within the budget, uncertainty's
    // reaching it is enough.
    if (random !== null) expect(uncertainty!).toBeLessThanOrEqual(random / 2);
  });

  it('keeps calibration verdicts out of training and follows the budget', () => {
    for (const r of [result.curve, result.random!.curve]) {
      expect(r.at(-1)!.labels).toBe(600);
      for (const p of r) expect(p.trainLabels + p.calibrationLabels).toBe(p.labels);
      // About a fifth of the post-start verdicts calibrate (random share 0.2).
      const last = r.at(-1)!;
      const share = last.calibrationLabels / (last.labels - r[0].labels);
      expect(share).toBeGreaterThan(0.15);
      expect(share).toBeLessThan(0.25);
    }
  });
});

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

const BUDGET = 600;

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
      budget: BUDGET,
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
    // Margin was chosen over entropy on seeds 1–3 with the earlier, underfit classifier. With the converged solver the
    // full-pool model is better (macro-F1 0.917 on seed 1), so 95 % of it is harder to reach: on seed 1 margin needs
    // 280 verdicts and random sampling does not get there within the budget of 600. Earlier runs on other seeds did
    // not always hold the "half" (random got there first on some), so this is a regression check of this
    // configuration on seed 1, not a general claim; the rehearsal's --seeds option measures the spread.
    const uncertainty = result.labelsToReach['0.95'];
    const random = result.random!.labelsToReach['0.95'];
    expect(uncertainty).not.toBeNull();
    // Random sampling not there within the budget means it needs more than the budget: half of that is more than half
    // the budget, so uncertainty must have got there within half the budget.
    expect(uncertainty!).toBeLessThanOrEqual((random ?? BUDGET) / 2);
  });

  it('keeps calibration verdicts out of training and follows the budget', () => {
    for (const r of [result.curve, result.random!.curve]) {
      expect(r.at(-1)!.labels).toBe(BUDGET);
      for (const p of r) expect(p.trainLabels + p.calibrationLabels).toBe(p.labels);
      // About a fifth of the post-start verdicts calibrate (random share 0.2).
      const last = r.at(-1)!;
      const share = last.calibrationLabels / (last.labels - r[0].labels);
      expect(share).toBeGreaterThan(0.15);
      expect(share).toBeLessThan(0.25);
    }
  });
});

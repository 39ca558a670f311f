import { describe, expect, it } from 'vitest';
import { createRng, type Rng } from '../random/rng.js';
import { ConformalCalibration, type CalibrationMode, type NonconformityScore } from './conformal-calibration.js';
import { calibrationSizeNeeded, conformalRank, conformalThreshold } from './conformal-quantile.js';
import { apsScore, lacScore } from './nonconformity.js';
import { predictionSet } from './prediction-set.js';

const TOL = 5e-5;

describe('split-conformal rank and threshold', () => {
  it('follows the worked example', () => {
    // Angelopoulos & Bates (2021, v6 2022), arXiv:2107.07511 [paper]
    // n = 10, α = 0.05 → k = 11 > 10 → full set;
    // α = 0.1 → k = 10 → q̂ = the largest score.
    expect(conformalRank(10, 0.05)).toBe(11);
    expect(conformalRank(10, 0.1)).toBe(10);
    const scores = Float64Array.from({ length: 10 }, (_, i) => i / 10);
    expect(conformalThreshold(scores, 0.05)).toBe(Number.POSITIVE_INFINITY);
    expect(conformalThreshold(scores, 0.1)).toBe(0.9);
  });

  it('is not thrown off by 1 − α rounding', () => {
    // (n + 1)(1 − α) is an integer on paper in each case (common practice, no source).
    expect(conformalRank(99, 0.05)).toBe(95);
    expect(conformalRank(9, 0.1)).toBe(9);
    expect(conformalRank(19, 0.3)).toBe(14);
    expect(conformalRank(999, 0.001)).toBe(999);
  });

  it('says how many calibration items a finite threshold needs', () => {
    // Smallest n′ ≥ n with ⌈(n′+1)(1−α)⌉ ≤ n′: α = 0.05 → 19; α = 0.1 → 9.
    expect(calibrationSizeNeeded(10, 0.05)).toBe(19);
    expect(calibrationSizeNeeded(0, 0.1)).toBe(9);
    expect(calibrationSizeNeeded(50, 0.1)).toBe(50);
    for (const alpha of [0.2, 0.1, 0.05, 0.01]) {
      const m = calibrationSizeNeeded(0, alpha);
      expect(conformalRank(m, alpha)).toBeLessThanOrEqual(m);
      expect(conformalRank(m - 1, alpha)).toBeGreaterThan(m - 1);
    }
    expect(() => conformalRank(-1, 0.1)).toThrow(/n must/);
    expect(() => conformalRank(5, 1)).toThrow(/alpha/);
  });
});

describe('nonconformity scores', () => {
  it('APS follows the worked example', () => {
    // Romano, Sesia & Candès (2020), NeurIPS [paper, authors' code]; example
    // recomputed: p = (0.5, 0.3, 0.15, 0.05), y at rank 3
    // → s = 0.95; randomised 0.8 + 0.15·U.
    const p = [0.3, 0.05, 0.15, 0.5];
    expect(Math.abs(apsScore(p, 2) - 0.95)).toBeLessThan(TOL);
    expect(Math.abs(apsScore(p, 2, 0.4) - (0.8 + 0.15 * 0.4))).toBeLessThan(TOL);
    expect(Math.abs(apsScore(p, 2, 0) - 0.8)).toBeLessThan(TOL);
  });

  it('LAC is 1 − p̂(y | x)', () => {
    // Angelopoulos & Bates (2021), §1 [paper].
    expect(Math.abs(lacScore([0.7, 0.2, 0.1], 1) - 0.8)).toBeLessThan(1e-12);
  });
});

/** A calibrated synthetic classifier: p from a random Dirichlet(1,…) draw, y ~ p. */
function draw(rng: Rng, k: number): { p: Float64Array; y: number } {
  const e = Float64Array.from({ length: k }, () => -Math.log(1 - rng.next()));
  // Skew so category 0 is rare and probabilities vary in sharpness.
  e[0] *= 0.3;
  const sharp = 1 + 3 * rng.next();
  let total = 0;
  for (let c = 0; c < k; c++) {
    e[c] = e[c] ** sharp;
    total += e[c];
  }
  const p = e.map((v) => v / total);
  let u = rng.next();
  let y = k - 1;
  for (let c = 0; c < k; c++) {
    if (u < p[c]) {
      y = c;
      break;
    }
    u -= p[c];
  }
  return { p, y };
}

describe('coverage over random exchangeable splits', () => {
  // Property: with n calibration items and continuous scores, mean coverage
  // lies in [1 − α, 1 − α + 1/(n + 1)] (Angelopoulos & Bates 2021 [paper];
  // per category, Vovk 2012 [reproduced]). Monte-Carlo tolerance: 600 splits ×
  // 200 test items; the sd of mean coverage is ≈ √(α(1−α)/(n+2) + α(1−α)/200)/√600
  // ≈ 0.0015 at n = 100; we allow 0.006 (4 sd).
  const k = 4;
  const n = 100;
  const m = 200;
  const splits = 600;
  const alpha = 0.1;
  const MC_TOL = 0.006;

  for (const score of ['lac', 'aps'] as NonconformityScore[]) {
    for (const mode of ['marginal', 'per-category'] as CalibrationMode[]) {
      it(`${score}, ${mode}`, () => {
        const rng = createRng(score === 'lac' ? 11 : 12);
        let covered = 0;
        let total = 0;
        const perCovered = new Array<number>(k).fill(0);
        const perTotal = new Array<number>(k).fill(0);
        for (let s = 0; s < splits; s++) {
          const cal = Array.from({ length: n }, () => draw(rng, k));
          const calibration = ConformalCalibration.fromScores(
            ['a', 'b', 'c', 'd'],
            cal.map((d) => d.p),
            cal.map((d) => d.y),
          );
          for (let t = 0; t < m; t++) {
            const { p, y } = draw(rng, k);
            const set = predictionSet(p, calibration, { alpha, score, mode });
            const hit = set.categories.includes(y) ? 1 : 0;
            covered += hit;
            total++;
            perCovered[y] += hit;
            perTotal[y]++;
          }
        }
        const coverage = covered / total;
        if (mode === 'marginal') {
          expect(coverage).toBeGreaterThanOrEqual(1 - alpha - MC_TOL);
          expect(coverage).toBeLessThanOrEqual(1 - alpha + 1 / (n + 1) + MC_TOL);
        } else {
          // Mondrian: each category covered at ≥ 1 − α. The rare category has
          // fewer test items (≈ 10 % of 120 000), so its sd is ≈ 0.003: 0.012.
          for (let c = 0; c < k; c++) expect(perCovered[c] / perTotal[c]).toBeGreaterThanOrEqual(1 - alpha - 0.012);
          expect(coverage).toBeGreaterThanOrEqual(1 - alpha - MC_TOL);
        }
      });
    }
  }
});

describe('ConformalCalibration and prediction sets', () => {
  const categories = ['x', 'y', 'z'];
  const probs = [
    [0.8, 0.1, 0.1],
    [0.6, 0.3, 0.1],
    [0.2, 0.7, 0.1],
    [0.3, 0.3, 0.4],
  ];
  const labels = [0, 1, 1, 2];
  const calibration = ConformalCalibration.fromScores(categories, probs, labels);

  it('stores sorted scores overall and per category, and round-trips', () => {
    // LAC scores: 0.2, 0.7, 0.3, 0.6 → sorted 0.2, 0.3, 0.6, 0.7.
    Array.from(calibration.scores('lac')).forEach((s, i) =>
      expect(Math.abs(s - [0.2, 0.3, 0.6, 0.7][i])).toBeLessThan(1e-12),
    );
    expect(calibration.size(1)).toBe(2);
    const restored = ConformalCalibration.fromJSON(JSON.parse(JSON.stringify(calibration.toJSON())));
    expect(Array.from(restored.scores('aps', 1))).toEqual(Array.from(calibration.scores('aps', 1)));
    expect(() => ConformalCalibration.fromJSON({ ...calibration.toJSON(), version: 3 })).toThrow(/version/);
    // Format 1 (before held-out scores) still loads, with none held out.
    const { heldOut: _heldOut, ...v1 } = calibration.toJSON();
    expect(ConformalCalibration.fromJSON({ ...v1, version: 1 }).heldOutSize()).toBe(0);
  });

  it('gives the full set and the number of verdicts still needed when k > n', () => {
    const set = predictionSet([0.9, 0.05, 0.05], calibration, { alpha: 0.1, score: 'lac', mode: 'marginal' });
    // n = 4, α = 0.1: k = ⌈5 · 0.9⌉ = 5 > 4; needs 9 (so 5 more).
    expect(set.categories).toEqual([0, 1, 2]);
    expect(set.call).toBe('ambiguous');
    expect(set.needMore).toBe(5);
  });

  it('makes sure, ambiguous and unfamiliar calls', () => {
    // α = 0.5: k = ⌈5 · 0.5⌉ = 3 → q̂ = 0.6 (LAC): y in set iff p_y ≥ 0.4.
    const opts = { alpha: 0.5, score: 'lac' as const, mode: 'marginal' as const };
    expect(predictionSet([0.9, 0.05, 0.05], calibration, opts).call).toBe('sure');
    expect(predictionSet([0.45, 0.45, 0.1], calibration, opts)).toEqual({
      categories: [0, 1],
      call: 'ambiguous',
      needMore: 0,
    });
    expect(predictionSet([0.34, 0.33, 0.33], calibration, opts).call).toBe('unfamiliar');
    // A score equal to q̂ up to rounding is in the set (tolerance 1e-12).
    expect(predictionSet([0.4 - 1e-15, 0.3 + 1e-15, 0.3], calibration, opts).categories).toEqual([0]);
  });

  it('uses per-category thresholds under Mondrian calibration', () => {
    // Category 0 has one score (0.2) and category 2 one (0.6): k = ⌈2 · 0.5⌉ = 1,
    // so q̂₀ = 0.2, q̂₂ = 0.6; category 1 scores 0.3, 0.7: k = ⌈3 · 0.5⌉ = 2 → 0.7.
    const set = predictionSet([0.5, 0.3, 0.2], calibration, { alpha: 0.5, score: 'lac', mode: 'per-category' });
    expect(set.categories).toEqual([1]);
  });

  it('requires randomisation to match the calibration', () => {
    const randomised = ConformalCalibration.fromScores(categories, probs, labels, { rng: createRng(1) });
    expect(randomised.apsRandomized).toBe(true);
    expect(() => predictionSet([0.5, 0.3, 0.2], randomised, { alpha: 0.5, score: 'aps', mode: 'marginal' })).toThrow(
      /randomis/,
    );
    const set = predictionSet([0.5, 0.3, 0.2], randomised, {
      alpha: 0.5,
      score: 'aps',
      mode: 'marginal',
      rng: createRng(2),
    });
    expect(['sure', 'ambiguous', 'unfamiliar']).toContain(set.call);
    expect(() => predictionSet([0.5, 0.5], calibration, { alpha: 0.5, score: 'lac', mode: 'marginal' })).toThrow(
      /3 categories/,
    );
  });

  it('gives each category its own miscoverage under Mondrian calibration', () => {
    // Category 1 scores 0.3, 0.7: α = 0.5 → k = 2 → 0.7; α = 0.7 → k = ⌈3 · 0.3⌉ = 1 → 0.3.
    const t = calibration.thresholds('lac', [0.5, 0.7, 0.5], 'per-category');
    expect(t.map((x) => x.threshold)).toEqual([0.19999999999999996, 0.30000000000000004, 0.6]);
    expect(t[1].rank).toBe(1);
    expect(
      predictionSet([0.5, 0.3, 0.2], calibration, { alpha: [0.5, 0.7, 0.5], score: 'lac', mode: 'per-category' })
        .categories,
    ).toEqual([]);
    expect(() => calibration.thresholds('lac', [0.5, 0.7, 0.5], 'marginal')).toThrow(/per-category calibration/);
    expect(() => calibration.thresholds('lac', [0.5, 0.7], 'per-category')).toThrow(/3 miscoverages/);
    expect(() => calibration.thresholds('lac', [0.5, 0, 0.5], 'per-category')).toThrow(/alpha\[1\]/);
  });

  it('reads training-conditional thresholds when a confidence is asked', () => {
    // Category 1 has 2 scores: at α = 0.5, 90 % confidence needs (0.5)^n ≤ 0.1, n ≥ 4 (ln 0.1 / ln 0.5 = 3.3).
    const t = calibration.categoryThreshold('lac', 0.5, 1, { confidence: 0.9 });
    expect(t.threshold).toBe(Number.POSITIVE_INFINITY);
    expect(t.needMore).toBe(2);
    expect(t.confidence).toBe(0.9);
    // Marginal, n = 4 at α = 0.5: P[Beta(4, 1) < 0.5] = 0.0625 ≤ 0.1 but P[Beta(3, 2) < 0.5] = 0.3125: k = 4.
    expect(calibration.threshold('lac', 0.5, { confidence: 0.9 }).rank).toBe(4);
    expect(calibration.threshold('lac', 0.5).rank).toBe(3);
    expect(() => calibration.threshold('lac', 0.5, { confidence: 1 })).toThrow(/confidence/);
  });

  it('leaves held-out items out of the thresholds of the categories asked, and keeps them on a round trip', () => {
    // Items 1 and 2 (category 1, LAC 0.7 and 0.3): item 2 held out.
    const held = ConformalCalibration.fromScores(categories, probs, labels, { heldOut: [false, false, true, false] });
    expect(held.heldOutSize()).toBe(1);
    expect(held.heldOutSize(1)).toBe(1);
    // Category 1 without item 2 has one score, 0.7: α = 0.5 → k = 1 → 0.7.
    const kept = held.categoryThreshold('lac', 0.5, 1, { holdOut: [1] });
    expect(kept.n).toBe(1);
    expect(kept.heldOut).toBe(1);
    expect(Math.abs(kept.threshold - 0.7)).toBeLessThan(1e-12);
    expect(held.categoryThreshold('lac', 0.5, 1).n).toBe(2);
    // Held-out items of other categories stay in.
    expect(held.categoryThreshold('lac', 0.5, 0, { holdOut: [1] }).n).toBe(1);
    const restored = ConformalCalibration.fromJSON(JSON.parse(JSON.stringify(held.toJSON())));
    expect(restored.categoryThreshold('lac', 0.5, 1, { holdOut: [1] })).toEqual(kept);
    expect(() => held.threshold('lac', 0.5, { holdOut: [1] })).toThrow(/per-category/);
    expect(() => held.thresholds('lac', 0.5, 'per-category', { holdOut: [3] })).toThrow(/holdOut\[0\]/);
    const broken = { ...held.toJSON(), heldOut: { lac: [[], [0.5], []], aps: [[], [], []] } };
    expect(() => ConformalCalibration.fromJSON(broken)).toThrow(/not part of/);
  });
});

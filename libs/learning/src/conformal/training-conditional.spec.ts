import { describe, expect, it } from 'vitest';
import { conformalRank } from './conformal-quantile.js';
import {
  coverageShortfallProbability,
  trainingConditionalRank,
  trainingConditionalSizeNeeded,
} from './training-conditional.js';

const TOL = 5e-5;

/**
 * P[Beta(k, n + 1 − k) < x] computed directly, without the incomplete beta:
 * it equals P[Binomial(n, x) ≥ k] (the k-th order statistic of n uniforms is
 * below x exactly when at least k of them are), summed term by term in log
 * space. An independent route to the same number.
 */
function betaCdfBySum(n: number, k: number, x: number): number {
  const logChoose = (m: number, j: number): number => {
    let s = 0;
    for (let i = 1; i <= j; i++) s += Math.log(m - j + i) - Math.log(i);
    return s;
  };
  let total = 0;
  for (let j = k; j <= n; j++) total += Math.exp(logChoose(n, j) + j * Math.log(x) + (n - j) * Math.log1p(-x));
  return total;
}

describe('training-conditional rank', () => {
  it('reproduces the recomputed examples', () => {
    // Vovk (2012), "Conditional validity of inductive conformal predictors", PMLR 25:475–490 [paper];
    // Angelopoulos & Bates (2021, v6 2022), arXiv:2107.07511, section on conditional coverage [paper]:
    // coverage at the k-th smallest of n scores is Beta(k, n + 1 − k). Values recomputed with
    // scipy.stats.beta (no published table): α = 0.1, δ = 0.1.
    expect(conformalRank(100, 0.1)).toBe(91);
    expect(trainingConditionalRank(100, 0.1, 0.9)).toBe(95);
    expect(Math.abs(coverageShortfallProbability(100, 95, 0.1) - 0.057577)).toBeLessThan(TOL);
    expect(coverageShortfallProbability(100, 94, 0.1)).toBeGreaterThan(0.1);
    expect(conformalRank(1000, 0.1)).toBe(901);
    expect(trainingConditionalRank(1000, 0.1, 0.9)).toBe(913);
    expect(Math.abs(coverageShortfallProbability(1000, 913, 0.1) - 0.091929)).toBeLessThan(TOL);
  });

  it('agrees with a direct computation of the Beta distribution', () => {
    for (const [n, alpha, confidence] of [
      [20, 0.1, 0.9],
      [57, 0.05, 0.8],
      [150, 0.2, 0.95],
      [333, 0.02, 0.9],
      [40, 0.3, 0.5],
    ]) {
      let expected = n + 1;
      for (let k = 1; k <= n; k++) {
        if (betaCdfBySum(n, k, 1 - alpha) <= 1 - confidence) {
          expected = k;
          break;
        }
      }
      expect(trainingConditionalRank(n, alpha, confidence)).toBe(expected);
      for (const k of [1, Math.ceil(n / 2), n]) {
        expect(Math.abs(coverageShortfallProbability(n, k, alpha) - betaCdfBySum(n, k, 1 - alpha))).toBeLessThan(1e-9);
      }
    }
  });

  it('answers n + 1 when even the largest score is not enough, and says how many are needed', () => {
    // (1 − α)^n ≤ δ ⇔ n ≥ ln δ / ln(1 − α) = ln 0.1 / ln 0.9 = 21.85…: 22 scores.
    expect(trainingConditionalRank(21, 0.1, 0.9)).toBe(22);
    expect(trainingConditionalRank(22, 0.1, 0.9)).toBe(22);
    expect(trainingConditionalSizeNeeded(0, 0.1, 0.9)).toBe(22);
    expect(trainingConditionalSizeNeeded(10, 0.1, 0.9)).toBe(22);
    expect(trainingConditionalSizeNeeded(30, 0.1, 0.9)).toBe(30);
    expect(trainingConditionalRank(0, 0.1, 0.9)).toBe(1);
    // α = 0.05, 95 % confidence: ln 0.05 / ln 0.95 = 58.4 → 59.
    expect(trainingConditionalSizeNeeded(0, 0.05, 0.95)).toBe(59);
    expect(trainingConditionalRank(58, 0.05, 0.95)).toBe(59);
    expect(trainingConditionalRank(59, 0.05, 0.95)).toBe(59);
  });

  it('checks its arguments', () => {
    expect(() => trainingConditionalRank(-1, 0.1, 0.9)).toThrow(/n must/);
    expect(() => trainingConditionalRank(10, 0, 0.9)).toThrow(/alpha/);
    expect(() => trainingConditionalRank(10, 0.1, 1)).toThrow(/confidence/);
    expect(() => coverageShortfallProbability(10, 11, 0.1)).toThrow(/k must/);
  });
});

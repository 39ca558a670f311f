import { regularizedIncompleteBeta } from '../intervals/incomplete-beta.js';
import { assertAlpha } from '../probability-checks.js';

function checkN(n: number): void {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`n must be a non-negative integer, got ${n}`);
}

/** Checks 0 < confidence < 1 (the probability, over calibration draws, that the promise holds). */
export function assertConfidence(confidence: number, name = 'confidence'): void {
  if (typeof confidence !== 'number' || !(confidence > 0 && confidence < 1))
    throw new RangeError(`${name} must be in (0, 1), got ${confidence}`);
}

/**
 * Probability, over the draw of the n calibration scores, that the coverage
 * of the split-conformal set thresholded at the k-th smallest score falls
 * below 1 − α. That coverage is Beta(k, n + 1 − k) distributed (Vovk 2012,
 * "Conditional validity of inductive conformal predictors", PMLR 25;
 * Angelopoulos & Bates 2021, arXiv:2107.07511, section on conditional
 * coverage), so the probability is the regularised incomplete beta
 * I_{1−α}(k, n + 1 − k). It falls as k grows.
 *
 * @param n     calibration scores (integer ≥ 1)
 * @param k     rank of the threshold, 1 ≤ k ≤ n
 * @param alpha miscoverage, 0 < α < 1
 */
export function coverageShortfallProbability(n: number, k: number, alpha: number): number {
  checkN(n);
  if (!Number.isInteger(k) || k < 1 || k > n) throw new RangeError(`k must be an integer in 1…${n}, got ${k}`);
  assertAlpha(alpha);
  return regularizedIncompleteBeta(1 - alpha, k, n + 1 - k);
}

/**
 * The training-conditional rank: the smallest k with
 * I_{1−α}(k, n + 1 − k) ≤ 1 − confidence, so that with probability at least
 * `confidence` over the calibration draws the set covers at least 1 − α
 * (Vovk 2012, Prop. 2a; Angelopoulos & Bates 2021, section on conditional
 * coverage). Answers n + 1 when even k = n is not enough (the threshold is
 * then +∞ and every category is in the set).
 */
export function trainingConditionalRank(n: number, alpha: number, confidence: number): number {
  checkN(n);
  assertAlpha(alpha);
  assertConfidence(confidence);
  const delta = 1 - confidence;
  if (n === 0 || coverageShortfallProbability(n, n, alpha) > delta) return n + 1;
  // The shortfall probability falls with k: bisect for the first k at or below δ.
  let lo = 1;
  let hi = n;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (coverageShortfallProbability(n, mid, alpha) <= delta) hi = mid;
    else lo = mid + 1;
  }
  return lo;
}

/**
 * Smallest n′ ≥ n at which {@link trainingConditionalRank} is finite: k = n′
 * works once P[Beta(n′, 1) < 1 − α] = (1 − α)^n′ ≤ 1 − confidence, i.e.
 * n′ ≥ ln(1 − confidence) / ln(1 − α).
 */
export function trainingConditionalSizeNeeded(n: number, alpha: number, confidence: number): number {
  checkN(n);
  assertAlpha(alpha);
  assertConfidence(confidence);
  const delta = 1 - confidence;
  // The same test as the rank's, so that the two never disagree at the floating-point edge.
  const enough = (m: number): boolean => m >= 1 && coverageShortfallProbability(m, m, alpha) <= delta;
  // Start just below the closed form.
  let m = Math.max(n, 1, Math.floor(Math.log(delta) / Math.log1p(-alpha)) - 2);
  while (!enough(m)) m++;
  while (m > Math.max(n, 1) && enough(m - 1)) m--;
  return m;
}

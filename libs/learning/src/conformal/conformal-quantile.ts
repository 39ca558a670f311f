import { assertAlpha } from '../probability-checks.js';

/**
 * Tolerance on (n + 1)(1 − α) before taking the ceiling: 1 − α is rarely exact
 * in binary floating point (1 − 0.1 = 0.9000000000000000222…), so products
 * that are integers on paper may land a hair above and jump a rank. A
 * relative slack of 1e-9 absorbs that rounding and is far below the spacing
 * of meaningful α values.
 */
export const RANK_TOLERANCE = 1e-9;

/**
 * The split-conformal rank k = ⌈(n + 1)(1 − α)⌉ (Vovk et al. 2005;
 * Angelopoulos & Bates 2021, eq. for q̂): the threshold is the k-th smallest
 * of the n calibration scores, or +∞ when k > n.
 *
 * @param n      number of calibration scores (integer ≥ 0)
 * @param alpha  miscoverage, 0 < α < 1
 */
export function conformalRank(n: number, alpha: number): number {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`n must be a non-negative integer, got ${n}`);
  assertAlpha(alpha);
  const x = (n + 1) * (1 - alpha);
  return Math.max(1, Math.ceil(x - RANK_TOLERANCE * Math.max(1, x)));
}

/**
 * Smallest n′ ≥ n with ⌈(n′ + 1)(1 − α)⌉ ≤ n′, i.e. the calibration size at
 * which the threshold becomes finite (Angelopoulos & Bates 2021: k > n means
 * α < 1/(n + 1)); the desk needs n′ − n more random verdicts.
 */
export function calibrationSizeNeeded(n: number, alpha: number): number {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`n must be a non-negative integer, got ${n}`);
  assertAlpha(alpha);
  // ⌈(n′+1)(1−α)⌉ ≤ n′ ⇔ (n′+1)(1−α) ≤ n′ ⇔ n′ ≥ (1−α)/α: start near it.
  let m = Math.max(n, Math.floor((1 - alpha) / alpha) - 2);
  while (conformalRank(m, alpha) > m) m++;
  while (m > n && conformalRank(m - 1, alpha) <= m - 1) m--;
  return m;
}

/**
 * The conformal threshold q̂ from ascending-sorted scores: the k-th smallest,
 * k = {@link conformalRank}, or +∞ if k > n. O(1) given the sorted scores.
 */
export function conformalThreshold(sortedScores: ArrayLike<number>, alpha: number): number {
  const n = sortedScores.length;
  const k = conformalRank(n, alpha);
  return k > n ? Number.POSITIVE_INFINITY : sortedScores[k - 1];
}

import { regularizedIncompleteBeta } from './incomplete-beta.js';

/**
 * P(X ≤ t) for X ~ Binomial(n, p), from the regularised incomplete beta:
 * P(X ≤ t) = I_{1−p}(n − t, t + 1) for 0 ≤ t < n (Abramowitz & Stegun 1964,
 * 26.5.24).
 */
export function binomialCdf(t: number, n: number, p: number): number {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`n must be a non-negative integer, got ${n}`);
  if (!(p >= 0 && p <= 1)) throw new RangeError(`p must be in [0, 1], got ${p}`);
  if (!Number.isInteger(t)) throw new RangeError(`t must be an integer, got ${t}`);
  if (t < 0) return 0;
  if (t >= n) return 1;
  if (p === 0) return 1;
  if (p === 1) return 0;
  return regularizedIncompleteBeta(1 - p, n - t, t + 1);
}

/**
 * The q-quantile of Binomial(n, p): the smallest t with P(X ≤ t) ≥ q, found
 * by bisection on the (increasing) distribution function.
 */
export function binomialQuantile(q: number, n: number, p: number): number {
  if (!(q >= 0 && q <= 1)) throw new RangeError(`q must be in [0, 1], got ${q}`);
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`n must be a non-negative integer, got ${n}`);
  if (!(p >= 0 && p <= 1)) throw new RangeError(`p must be in [0, 1], got ${p}`);
  let lo = 0;
  let hi = n;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (binomialCdf(mid, n, p) >= q) hi = mid;
    else lo = mid + 1;
  }
  return lo;
}

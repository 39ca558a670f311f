import { assertProbabilities } from '../probability-checks.js';

/**
 * Least-confidence uncertainty 1 − P(ŷ | x), ŷ the most probable category
 * (Settles 2009, "Active Learning Literature Survey", §3.1). Higher is more
 * uncertain; range [0, 1 − 1/k].
 */
export function leastConfidence(p: ArrayLike<number>): number {
  assertProbabilities(p, 'p');
  let max = 0;
  for (let i = 0; i < p.length; i++) if (p[i] > max) max = p[i];
  return 1 - max;
}

/**
 * Margin P(ŷ₁ | x) − P(ŷ₂ | x) between the two most probable categories
 * (Settles 2009, §3.1). Smaller is more uncertain; range [0, 1]. A single
 * category has margin 1.
 */
export function margin(p: ArrayLike<number>): number {
  assertProbabilities(p, 'p');
  let first = 0;
  let second = 0;
  for (let i = 0; i < p.length; i++) {
    const v = p[i];
    if (v > first) {
      second = first;
      first = v;
    } else if (v > second) {
      second = v;
    }
  }
  return first - second;
}

/**
 * Entropy −Σ P(y | x) ln P(y | x) in nats, 0 ln 0 = 0 (Settles 2009, §3.1,
 * after Shannon 1948). Higher is more uncertain; range [0, ln k].
 */
export function entropy(p: ArrayLike<number>): number {
  assertProbabilities(p, 'p');
  let h = 0;
  for (let i = 0; i < p.length; i++) if (p[i] > 0) h -= p[i] * Math.log(p[i]);
  return h;
}

export type UncertaintyStrategy = 'entropy' | 'margin' | 'least-confidence';

/**
 * Uncertainty on one scale for every strategy, higher = more informative to
 * ask about: entropy, least confidence, or 1 − margin.
 */
export function uncertainty(p: ArrayLike<number>, strategy: UncertaintyStrategy): number {
  switch (strategy) {
    case 'entropy':
      return entropy(p);
    case 'least-confidence':
      return leastConfidence(p);
    case 'margin':
      return 1 - margin(p);
    default:
      throw new RangeError(`strategy must be entropy, margin or least-confidence, got ${String(strategy)}`);
  }
}

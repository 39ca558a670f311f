import type { Rng } from '../random/rng.js';
import {
  addCoincidences,
  alphaFromCoincidences,
  alphaOfCounts,
  countValues,
  type AlphaLevel,
  type ReliabilityTable,
} from './krippendorff-alpha.js';

/** A bootstrap percentile interval for alpha. */
export interface AlphaInterval {
  alpha: number;
  lower: number;
  upper: number;
  confidence: number;
  resamples: number;
  /** Resamples whose alpha is undefined (no variation among the drawn units); the percentiles leave them out. */
  undefinedResamples: number;
}

export interface AlphaBootstrapOptions {
  level?: AlphaLevel;
  /** Default 1 000. */
  resamples?: number;
  /** Two-sided level, default 0.95. */
  confidence?: number;
  /** The source of randomness; seed it for reproducible intervals. */
  rng: Rng;
}

/**
 * Quantile of sorted values by linear interpolation between order
 * statistics (Hyndman & Fan 1996, definition 7). Common practice, no source
 * beyond that.
 */
export function sortedQuantile(sorted: ArrayLike<number>, p: number): number {
  if (sorted.length === 0) return Number.NaN;
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/**
 * Percentile bootstrap interval for Krippendorff's alpha (Efron & Tibshirani
 * 1993, ch. 13): resample the pairable units with replacement, recompute
 * alpha on each resample, and take the (1−c)/2 and (1+c)/2 quantiles.
 * Units, not single values, are resampled because values within a unit are
 * not independent.
 */
export function alphaBootstrap(table: ReliabilityTable, options: AlphaBootstrapOptions): AlphaInterval {
  const resamples = options.resamples ?? 1000;
  const confidence = options.confidence ?? 0.95;
  if (!Number.isInteger(resamples) || resamples < 1)
    throw new RangeError(`resamples must be a positive integer, got ${resamples}`);
  if (!(confidence > 0 && confidence < 1)) throw new RangeError(`confidence must be in (0, 1), got ${confidence}`);
  // JavaScript callers are not held to the type.
  if (!(options.rng as Rng | undefined) || typeof options.rng.next !== 'function')
    throw new TypeError('rng must be a random source with next()');
  const counts = countValues(table, options.level ?? 'nominal');
  const alpha = alphaOfCounts(counts).alpha;
  const units = counts.units.length;
  const size = counts.values.length ** 2;
  const draws: number[] = [];
  let undefinedResamples = 0;
  if (units > 0) {
    const weights = new Float64Array(units);
    const o = new Float64Array(size);
    for (let r = 0; r < resamples; r++) {
      weights.fill(0);
      for (let i = 0; i < units; i++) weights[Math.floor(options.rng.next() * units)] += 1;
      o.fill(0);
      addCoincidences(counts, weights, o);
      const a = alphaFromCoincidences(o, counts.values, counts.level).alpha;
      if (Number.isNaN(a)) undefinedResamples++;
      else draws.push(a);
    }
  } else {
    undefinedResamples = resamples;
  }
  draws.sort((a, b) => a - b);
  return {
    alpha,
    lower: sortedQuantile(draws, (1 - confidence) / 2),
    upper: sortedQuantile(draws, (1 + confidence) / 2),
    confidence,
    resamples,
    undefinedResamples,
  };
}

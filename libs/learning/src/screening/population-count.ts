import { clopperPearsonInterval } from '../intervals/binomial-intervals.js';
import { binomialQuantile } from '../intervals/binomial-quantile.js';
import { twoSidedZ } from '../intervals/normal-quantile.js';
import { ppiTotal, type UnlabelledPopulation } from './prediction-powered.js';

/**
 * The normal-theory interval of prediction-powered inference is trusted only
 * with at least this many labelled items, and at least
 * {@link PPI_MIN_EVENTS} of them with and without the category. The rule
 * "n·p ≥ 5 and n·(1 − p) ≥ 5" is the textbook threshold for a normal
 * approximation to a binomial (common practice, no source); 10 is stricter
 * because here p̂ is itself estimated from those few labels.
 */
export const PPI_MIN_LABELLED = 30;
export const PPI_MIN_EVENTS = 10;

export type CountMethod = 'ppi++' | 'clopper-pearson' | 'none' | 'exact';

/** How many items of a category a finite population holds, with an interval. */
export interface CountEstimate {
  /** Point estimate; null when no labelled item stands behind it. */
  estimate: number | null;
  lower: number;
  upper: number;
  /**
   * `ppi++`: prediction-powered (labels and model scores); `clopper-pearson`:
   * from the labels alone, when too few labelled items or too few of the
   * category for the normal interval; `none`: no labelled item, the bounds are
   * 0 and the population size; `exact`: the population is empty.
   */
  method: CountMethod;
  /** Labelled items drawn from the population's distribution. */
  labelled: number;
  /** Of them, items of the category. */
  events: number;
  /** PPI++'s weight of the model scores (null unless method is ppi++). */
  lambda: number | null;
  /** Items in the population (scored and unscored). */
  population: number;
}

export interface CountOptions {
  /** Two-sided confidence of the interval (default 0.95). */
  confidence?: number;
}

/**
 * Estimates how many items of a category a finite population of unlabelled
 * items holds, from labelled items drawn from the same distribution
 * (indicator labels 0/1 and the model's probability of the category for
 * each) and the population's model probabilities.
 *
 * With enough labelled items and events ({@link PPI_MIN_LABELLED},
 * {@link PPI_MIN_EVENTS}) it is the prediction-powered total with PPI++'s
 * tuned weight ({@link ppiTotal}); the interval is clipped to [0, N].
 * Otherwise the share is bounded from the labels alone by Clopper–Pearson
 * at confidence 1 − γ/2 (γ = 1 − confidence) and the count by the γ/4 and
 * 1 − γ/4 quantiles of Binomial(N, share) at those bounds: by the union
 * bound, the interval holds the population's count with probability at least
 * 1 − γ (Clopper & Pearson 1934; the binomial spread matters when the
 * population is not much larger than the labelled sample).
 */
export function estimatePopulationCount(
  labels: ArrayLike<number>,
  labelledScores: ArrayLike<number>,
  population: UnlabelledPopulation,
  options: CountOptions = {},
): CountEstimate {
  const confidence = options.confidence ?? 0.95;
  const z = twoSidedZ(confidence);
  const n = labels.length;
  let events = 0;
  for (let i = 0; i < n; i++) {
    if (labels[i] !== 0 && labels[i] !== 1) throw new RangeError(`labels[${i}] must be 0 or 1, got ${labels[i]}`);
    events += labels[i];
  }
  const N = population.scored.count + population.unscored;
  const base = { labelled: n, events, population: N };
  if (N === 0) return { ...base, estimate: 0, lower: 0, upper: 0, method: 'exact', lambda: null };
  if (n === 0) return { ...base, estimate: null, lower: 0, upper: N, method: 'none', lambda: null };
  if (n >= PPI_MIN_LABELLED && events >= PPI_MIN_EVENTS && n - events >= PPI_MIN_EVENTS) {
    const t = ppiTotal(labels, labelledScores, population, { z });
    const estimate = Math.min(N, Math.max(0, t.estimate));
    return {
      ...base,
      estimate,
      lower: Math.min(estimate, Math.max(0, t.lower)),
      upper: Math.max(estimate, Math.min(N, t.upper)),
      method: 'ppi++',
      lambda: t.lambda,
    };
  }
  const gamma = 1 - confidence;
  const share = clopperPearsonInterval(events, n, 1 - gamma / 2);
  const estimate = (N * events) / n;
  return {
    ...base,
    estimate,
    lower: Math.min(estimate, binomialQuantile(gamma / 4, N, share.lower)),
    upper: Math.max(estimate, binomialQuantile(1 - gamma / 4, N, share.upper)),
    method: 'clopper-pearson',
    lambda: null,
  };
}

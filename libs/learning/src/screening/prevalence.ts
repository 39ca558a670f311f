import { estimatePopulationCount, type CountMethod, type CountOptions } from './population-count.js';
import type { UnlabelledPopulation } from './prediction-powered.js';

/** What one period holds, for one category. */
export interface PeriodSample {
  /** Items of the period whose label is known from draws other than the uniform random one. */
  decided: number;
  /** Of them, items of the category. */
  decidedInCategory: number;
  /** Indicator labels (1: the category) of the period's items drawn uniformly at random and decided. */
  randomLabels: ArrayLike<number>;
  /** The model's probability of the category for each of those. */
  randomScores: ArrayLike<number>;
  /** The period's other items: the model's probabilities of the category where it has them, and how many it has not. */
  unlabelled: UnlabelledPopulation;
}

/** A category's share of a period's items. */
export interface PrevalenceEstimate {
  /** Share of the period's items in the category; null when no random verdict stands behind it. */
  share: number | null;
  lower: number;
  upper: number;
  method: CountMethod;
  /** Items of the period. */
  items: number;
  /** Random verdicts of the period behind the figure. */
  randomVerdicts: number;
}

/**
 * A category's prevalence among a period's items: the items decided by
 * other draws count with their labels, the random draws with theirs, and
 * the count among the remaining items is estimated from the random draws and
 * the model's probabilities ({@link estimatePopulationCount}: PPI++ with a
 * clipped interval, or Clopper–Pearson when too few random verdicts or too
 * few of the category; Angelopoulos, Bates, Fannjiang, Jordan & Zrnic 2023).
 * The random draws are treated as a uniform sample of the items that no
 * other draw decided: each was uniform over the items open when it was drawn,
 * which is close to, not exactly, that population.
 */
export function estimatePrevalence(sample: PeriodSample, options: CountOptions = {}): PrevalenceEstimate {
  const { decided, decidedInCategory } = sample;
  if (!Number.isInteger(decided) || decided < 0)
    throw new RangeError(`decided must be a non-negative integer, got ${decided}`);
  if (!Number.isInteger(decidedInCategory) || decidedInCategory < 0 || decidedInCategory > decided)
    throw new RangeError(`decidedInCategory must be an integer in 0…${decided}, got ${decidedInCategory}`);
  const count = estimatePopulationCount(sample.randomLabels, sample.randomScores, sample.unlabelled, options);
  const items = decided + count.labelled + count.population;
  const known = decidedInCategory + count.events;
  if (items === 0) return { share: null, lower: 0, upper: 1, method: 'none', items: 0, randomVerdicts: 0 };
  return {
    share: count.estimate === null ? null : (known + count.estimate) / items,
    lower: (known + count.lower) / items,
    upper: (known + count.upper) / items,
    method: count.method,
    items,
    randomVerdicts: count.labelled,
  };
}

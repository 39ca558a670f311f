import { assertLabelPairs } from './metric-checks.js';

/** Accuracy: the share of items whose predicted category is the true one. */
export function accuracy(truth: readonly number[], predicted: readonly number[], k: number): number {
  assertLabelPairs(truth, predicted, k);
  let hits = 0;
  for (let i = 0; i < truth.length; i++) if (truth[i] === predicted[i]) hits++;
  return hits / truth.length;
}

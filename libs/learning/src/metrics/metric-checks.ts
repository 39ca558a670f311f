import { assertLabel, assertProbabilities } from '../probability-checks.js';

/** Checks parallel label arrays (integer category indices in 0…k−1). */
export function assertLabelPairs(truth: readonly number[], predicted: readonly number[], k: number): void {
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`k must be a positive integer, got ${k}`);
  if (truth.length !== predicted.length)
    throw new RangeError(`truth (${truth.length}) and predicted (${predicted.length}) differ in length`);
  if (truth.length === 0) throw new RangeError('truth must not be empty');
  truth.forEach((y, i) => assertLabel(y, k, `truth[${i}]`));
  predicted.forEach((y, i) => assertLabel(y, k, `predicted[${i}]`));
}

/** Checks probability rows against labels; returns k. */
export function assertProbabilityRows(probabilities: readonly ArrayLike<number>[], labels: readonly number[]): number {
  if (probabilities.length !== labels.length) {
    throw new RangeError(`probabilities (${probabilities.length}) and labels (${labels.length}) differ in length`);
  }
  if (probabilities.length === 0) throw new RangeError('probabilities must not be empty');
  const k = probabilities[0].length;
  probabilities.forEach((p, i) => {
    assertProbabilities(p, `probabilities[${i}]`);
    if (p.length !== k) throw new RangeError(`probabilities[${i}] has ${p.length} entries, expected ${k}`);
    assertLabel(labels[i], k, `labels[${i}]`);
  });
  return k;
}

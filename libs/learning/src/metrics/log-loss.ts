import { assertProbabilityRows } from './metric-checks.js';

/** Probabilities are clipped to [ε, 1] before the logarithm so one 0 does not make the loss infinite. */
export const LOG_LOSS_EPSILON = 1e-15;

/**
 * Multi-class log loss (cross-entropy) −(1/n) Σ_i ln p̂(y_i | x_i) (Good
 * 1952's logarithmic score), with p̂ clipped below at 1e-15 as scikit-learn
 * does.
 */
export function logLoss(probabilities: readonly ArrayLike<number>[], labels: readonly number[]): number {
  assertProbabilityRows(probabilities, labels);
  let sum = 0;
  for (let i = 0; i < labels.length; i++) sum -= Math.log(Math.max(LOG_LOSS_EPSILON, probabilities[i][labels[i]]));
  return sum / labels.length;
}

import { assertProbabilityRows } from './metric-checks.js';

/**
 * Multi-class Brier score (Brier 1950, "Verification of forecasts expressed
 * in terms of probability"): (1/n) Σ_i Σ_j (f_ij − E_ij)², E_ij = 1 if item i
 * is in category j, else 0. Range 0 (perfect) to 2. For two categories it is
 * twice the binary score (1/n) Σ (p_i − y_i)².
 */
export function brierScore(probabilities: readonly ArrayLike<number>[], labels: readonly number[]): number {
  const k = assertProbabilityRows(probabilities, labels);
  let sum = 0;
  for (let i = 0; i < labels.length; i++) {
    const p = probabilities[i];
    for (let j = 0; j < k; j++) {
      const d = p[j] - (j === labels[i] ? 1 : 0);
      sum += d * d;
    }
  }
  return sum / labels.length;
}

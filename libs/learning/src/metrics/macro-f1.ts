import { assertLabelPairs } from './metric-checks.js';

/**
 * Macro-averaged F1: the unweighted mean over categories of
 * F1 = 2·TP / (2·TP + FP + FN) (van Rijsbergen 1979's F with β = 1), over
 * the categories present in the truth or the predictions (scikit-learn's
 * default label set); a category with TP = FP = FN = 0 is absent, one with
 * TP = 0 but errors scores 0.
 */
export function macroF1(truth: readonly number[], predicted: readonly number[], k: number): number {
  assertLabelPairs(truth, predicted, k);
  const tp = new Float64Array(k);
  const fp = new Float64Array(k);
  const fn = new Float64Array(k);
  for (let i = 0; i < truth.length; i++) {
    if (truth[i] === predicted[i]) tp[truth[i]]++;
    else {
      fp[predicted[i]]++;
      fn[truth[i]]++;
    }
  }
  let sum = 0;
  let present = 0;
  for (let c = 0; c < k; c++) {
    const d = 2 * tp[c] + fp[c] + fn[c];
    if (d === 0) continue;
    present++;
    sum += (2 * tp[c]) / d;
  }
  return sum / present;
}

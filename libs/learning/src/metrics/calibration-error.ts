import { assertProbabilityRows } from './metric-checks.js';

/** One bin of a reliability diagram. */
export interface ReliabilityBin {
  /** Bin (lower, upper]; the first bin also holds confidence 0. */
  lower: number;
  upper: number;
  count: number;
  /** Mean confidence of the bin's items (NaN when empty). */
  meanConfidence: number;
  /** Share of the bin's items predicted correctly (NaN when empty). */
  accuracy: number;
}

/**
 * Slack when placing a confidence in its bin: c·M is computed in floating
 * point, and a confidence on a bin edge (0.9 with M = 10) must land in the
 * bin it closes, ((m−1)/M, m/M].
 */
const EDGE_TOLERANCE = 1e-9;

function checkInputs(confidences: readonly number[], correct: readonly (boolean | number)[], bins: number): void {
  if (!Number.isInteger(bins) || bins < 1) throw new RangeError(`bins must be a positive integer, got ${bins}`);
  if (confidences.length !== correct.length) {
    throw new RangeError(`confidences (${confidences.length}) and correct (${correct.length}) differ in length`);
  }
  if (confidences.length === 0) throw new RangeError('confidences must not be empty');
  confidences.forEach((c, i) => {
    if (typeof c !== 'number' || !(c >= 0 && c <= 1))
      throw new RangeError(`confidences[${i}] must be in [0, 1], got ${c}`);
  });
}

/**
 * Reliability diagram with M equal-width bins ((m−1)/M, m/M] (Guo, Pleiss,
 * Sun & Weinberger 2017, "On Calibration of Modern Neural Networks", §2):
 * per bin the count, mean confidence and accuracy.
 */
export function reliabilityBins(
  confidences: readonly number[],
  correct: readonly (boolean | number)[],
  bins = 10,
): ReliabilityBin[] {
  checkInputs(confidences, correct, bins);
  const count = new Float64Array(bins);
  const conf = new Float64Array(bins);
  const hits = new Float64Array(bins);
  for (let i = 0; i < confidences.length; i++) {
    const c = confidences[i];
    const b = Math.min(bins - 1, Math.max(0, Math.ceil(c * bins - EDGE_TOLERANCE) - 1));
    count[b]++;
    conf[b] += c;
    if (correct[i] === true || correct[i] === 1) hits[b]++;
  }
  return Array.from({ length: bins }, (_, b) => ({
    lower: b / bins,
    upper: (b + 1) / bins,
    count: count[b],
    meanConfidence: count[b] > 0 ? conf[b] / count[b] : Number.NaN,
    accuracy: count[b] > 0 ? hits[b] / count[b] : Number.NaN,
  }));
}

/**
 * Expected calibration error, Guo et al. (2017), eq. 3:
 * ECE = Σ_m (|B_m| / n)·|acc(B_m) − conf(B_m)| over M equal-width bins.
 */
export function expectedCalibrationError(
  confidences: readonly number[],
  correct: readonly (boolean | number)[],
  bins = 10,
): number {
  const n = confidences.length;
  return reliabilityBins(confidences, correct, bins).reduce(
    (sum, b) => (b.count === 0 ? sum : sum + (b.count / n) * Math.abs(b.accuracy - b.meanConfidence)),
    0,
  );
}

/** Top-label confidences and correctness from probability rows (ties: first category). */
export function topLabelConfidence(
  probabilities: readonly ArrayLike<number>[],
  labels: readonly number[],
): { confidences: number[]; correct: boolean[] } {
  assertProbabilityRows(probabilities, labels);
  const confidences: number[] = [];
  const correct: boolean[] = [];
  probabilities.forEach((p, i) => {
    let best = 0;
    for (let c = 1; c < p.length; c++) if (p[c] > p[best]) best = c;
    confidences.push(p[best]);
    correct.push(best === labels[i]);
  });
  return { confidences, correct };
}

import { assertAlpha, assertProbabilities } from '../probability-checks.js';
import type { Rng } from '../random/rng.js';
import type { CalibrationMode, ConformalCalibration, NonconformityScore } from './conformal-calibration.js';
import { rankByProbability } from './nonconformity.js';

/**
 * Scores within this distance above the threshold still count as ≤ q̂. The
 * same score computed for a calibration item and for a new item can differ in
 * the last bits (APS sums probabilities in an order that depends on ties), and
 * scores live in [0, 1] with rounding error ~1e-16 per operation; 1e-12
 * absorbs that without admitting any genuinely larger score.
 */
export const SCORE_TIE_TOLERANCE = 1e-12;

export type TriageCall = 'sure' | 'ambiguous' | 'unfamiliar';

export interface PredictionSet {
  /** Category indices in the set, ascending. */
  categories: number[];
  /** sure: one category; ambiguous: two or more; unfamiliar: none. */
  call: TriageCall;
  /** More random verdicts needed before every threshold is finite (0 when none are +∞). */
  needMore: number;
}

export interface PredictionSetOptions {
  /** Miscoverage α (target coverage 1 − α). */
  alpha: number;
  score: NonconformityScore;
  mode: CalibrationMode;
  /**
   * Randomises APS (Z_(r−1) + U·p_y, one U per item). Default: the
   * non-randomised APS score Z_r, which keeps sets reproducible for a
   * reviewer; its coverage is still ≥ 1 − α. Use it only if the calibration
   * was randomised too.
   */
  rng?: Rng;
}

/** The triage call of a set of `size` categories. */
export function triageCall(size: number): TriageCall {
  return size === 0 ? 'unfamiliar' : size === 1 ? 'sure' : 'ambiguous';
}

/**
 * Split-conformal prediction set C(x) = {y : s(x, y) ≤ q̂} (Angelopoulos &
 * Bates 2021, §1), with q̂ per category under Mondrian calibration
 * (C(x) = {y : s(x, y) ≤ q̂_y}; Vovk et al. 2003), for the LAC or APS score
 * (Romano, Sesia & Candès 2020).
 */
export function predictionSet(
  p: ArrayLike<number>,
  calibration: ConformalCalibration,
  options: PredictionSetOptions,
): PredictionSet {
  assertProbabilities(p, 'p');
  const k = calibration.categories.length;
  if (p.length !== k) throw new RangeError(`p has ${p.length} entries, the calibration ${k} categories`);
  assertAlpha(options.alpha, 'options.alpha');
  const thresholds = calibration.thresholds(options.score, options.alpha, options.mode);
  const randomized = options.rng !== undefined;
  if (options.score === 'aps' && randomized !== calibration.apsRandomized) {
    throw new RangeError(
      `options.rng ${randomized ? 'randomises' : 'does not randomise'} APS but the calibration ${calibration.apsRandomized ? 'is' : 'is not'} randomised`,
    );
  }
  const members: number[] = [];
  if (options.score === 'lac') {
    for (let c = 0; c < k; c++) if (1 - p[c] <= thresholds[c].threshold + SCORE_TIE_TOLERANCE) members.push(c);
  } else {
    const u = options.rng?.next();
    const order = rankByProbability(p);
    let before = 0;
    for (let r = 0; r < k; r++) {
      const c = order[r];
      const s = u === undefined ? before + p[c] : before + u * p[c];
      if (s <= thresholds[c].threshold + SCORE_TIE_TOLERANCE) members.push(c);
      before += p[c];
    }
    members.sort((a, b) => a - b);
  }
  const needMore = thresholds.reduce((m, t) => Math.max(m, t.needMore), 0);
  return { categories: members, call: triageCall(members.length), needMore };
}

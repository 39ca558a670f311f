import { assertAlpha, assertProbabilities } from '../probability-checks.js';
import type { Rng } from '../random/rng.js';
import type {
  CalibrationMode,
  ConformalCalibration,
  ConformalThreshold,
  NonconformityScore,
} from './conformal-calibration.js';
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
  /** Miscoverage α (target coverage 1 − α), or one per category under per-category calibration. */
  alpha: number | readonly number[];
  score: NonconformityScore;
  mode: CalibrationMode;
  /** Null or absent: expected coverage; a number: training-conditional thresholds at that confidence. */
  confidence?: number | null;
  /** Categories whose thresholds leave out held-out calibration items (see ConformalCalibration). */
  holdOut?: readonly number[];
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
  // Callers set one item at a time with a fresh options object: keep the rule of the last settings seen.
  if (options.rng !== undefined) return predictionSetRule(calibration, options)(p);
  const key = `${options.score}|${options.mode}|${String(options.alpha)}|${options.confidence ?? ''}|${options.holdOut?.join(',') ?? ''}`;
  let rules = RULES.get(calibration);
  if (!rules) {
    rules = new Map();
    RULES.set(calibration, rules);
  }
  let rule = rules.get(key);
  if (!rule) {
    rule = predictionSetRule(calibration, options);
    if (rules.size >= MAX_RULES) rules.delete(rules.keys().next().value as string);
    rules.set(key, rule);
  }
  return rule(p);
}

/** Rules already made, per calibration (dropped with it), by settings; at most MAX_RULES each. */
const RULES = new WeakMap<ConformalCalibration, Map<string, (p: ArrayLike<number>) => PredictionSet>>();
const MAX_RULES = 128;

/**
 * The rule of {@link predictionSet} with its thresholds read once: the
 * function to use over many items at the same settings.
 */
export function predictionSetRule(
  calibration: ConformalCalibration,
  options: PredictionSetOptions,
): (p: ArrayLike<number>) => PredictionSet {
  const k = calibration.categories.length;
  if (typeof options.alpha === 'number') assertAlpha(options.alpha, 'options.alpha');
  const thresholds = calibration.thresholds(options.score, options.alpha, options.mode, {
    confidence: options.confidence,
    holdOut: options.holdOut,
  });
  const randomized = options.rng !== undefined;
  if (options.score === 'aps' && randomized !== calibration.apsRandomized) {
    throw new RangeError(
      `options.rng ${randomized ? 'randomises' : 'does not randomise'} APS but the calibration ${calibration.apsRandomized ? 'is' : 'is not'} randomised`,
    );
  }
  const needMore = thresholds.reduce((m, t) => Math.max(m, t.needMore), 0);
  const limits = Float64Array.from(thresholds, (t: ConformalThreshold) => t.threshold + SCORE_TIE_TOLERANCE);
  return (p) => {
    assertProbabilities(p, 'p');
    if (p.length !== k) throw new RangeError(`p has ${p.length} entries, the calibration ${k} categories`);
    const members: number[] = [];
    if (options.score === 'lac') {
      for (let c = 0; c < k; c++) if (1 - p[c] <= limits[c]) members.push(c);
    } else {
      const u = options.rng?.next();
      const order = rankByProbability(p);
      let before = 0;
      for (let r = 0; r < k; r++) {
        const c = order[r];
        const s = u === undefined ? before + p[c] : before + u * p[c];
        if (s <= limits[c]) members.push(c);
        before += p[c];
      }
      members.sort((a, b) => a - b);
    }
    return { categories: members, call: triageCall(members.length), needMore };
  };
}

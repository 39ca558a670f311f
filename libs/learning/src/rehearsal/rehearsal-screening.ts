import { predictionSet, type PredictionSetOptions } from '../conformal/prediction-set.js';
import type { ConformalCalibration } from '../conformal/conformal-calibration.js';
import { addScore, emptyScoreSummary } from '../screening/prediction-powered.js';
import { estimatePopulationCount, type CountMethod } from '../screening/population-count.js';
import { inEstimationFold } from '../screening/estimation-fold.js';

/** What the cleared pile holds of one watched category: the truth beside the desk's estimate. */
export interface WatchedCategoryFigures {
  /** Open items of the category (their true label). */
  open: number;
  /** Share of the category's open items that are flagged (their set holds a watched category); null without any. */
  recall: number | null;
  /**
   * Share of the category's items in the pool (the decided and the open) that reviewers decided or the sets flag:
   * the promise a desk states, which holds with the review lane on (the lane takes flagged items only, so it never
   * lowers the number left open and unflagged); `recall` on the open items alone can fall below the target.
   */
  caught: number | null;
  /** Items of the category decided so far (by any draw). */
  decided: number;
  /** Open items whose set holds the category. */
  flagged: number;
  /** Share of the open items whose set holds the category: its reading load. */
  load: number;
  /** Items of the category the cleared pile really holds. */
  cleared: number;
  /**
   * The desk's estimate of `cleared` (`GET /screening`'s `clearedExpectedMisses`): prediction-powered inference
   * from the estimation fold's random verdicts whose items the sets clear, or Clopper–Pearson from those alone.
   */
  clearedEstimate: {
    estimate: number | null;
    lower: number;
    upper: number;
    method: CountMethod;
    randomVerdicts: number;
    ofCategory: number;
  };
  /** True when the 95 % interval holds `cleared`. */
  inInterval: boolean;
  /** Flagging every item that matches a seed term instead (only with seed terms). */
  keywordBaseline?: { recall: number | null; load: number };
}

/** Screening of the open items at one curve point, with the watched categories' truth and estimates. */
export interface ScreeningFigures {
  open: number;
  /** Open items whose set holds a watched category. */
  flagged: number;
  cleared: number;
  /** Share of the open items flagged: the reading load. */
  load: number;
  perCategory: Record<string, WatchedCategoryFigures>;
  /** Open items that match a seed term, and their share (only with seed terms). */
  keywordBaseline?: { flagged: number; load: number };
}

/**
 * The desk's screening as `GET /api/desks/:deskId/screening` computes it,
 * measured against the labels: each open item is flagged when its set holds
 * a watched category and cleared otherwise; per watched category, the true
 * number of its items in the cleared pile beside the estimate the desk would
 * state (the random verdicts of the estimation fold that the sets clear, and
 * the model's probabilities of the category over the cleared pile, through
 * {@link estimatePopulationCount}), its recall and its reading load; and,
 * with seed-term matches, what flagging every matching item would do.
 *
 * @param rows open items (indices into `labels`), calibration items (the random verdicts), every decided item (the
 *   calibration items among them)
 * @param seedMatch per item index, whether it matches a seed term (omit without seed terms)
 */
export function screeningFigures(
  classes: readonly string[],
  labels: Int32Array,
  watched: readonly number[],
  rows: { open: readonly number[]; calibration: readonly number[]; decided: readonly number[] },
  probabilities: ReadonlyMap<number, Float64Array>,
  calibration: ConformalCalibration,
  setOptions: PredictionSetOptions,
  seedMatch?: (row: number) => boolean,
): ScreeningFigures {
  const setOf = (row: number): number[] => predictionSet(probabilities.get(row)!, calibration, setOptions).categories;
  const isFlagged = (row: number): boolean => setOf(row).some((c) => watched.includes(c));
  const w = watched.length;
  const ofCategory = new Array<number>(w).fill(0);
  const caught = new Array<number>(w).fill(0);
  const holding = new Array<number>(w).fill(0);
  const keywordCaught = new Array<number>(w).fill(0);
  const pile = watched.map(() => emptyScoreSummary());
  let flagged = 0;
  let keywordFlagged = 0;
  for (const row of rows.open) {
    const set = setOf(row);
    const isFlaggedRow = set.some((c) => watched.includes(c));
    const matches = seedMatch?.(row) ?? false;
    if (isFlaggedRow) flagged++;
    if (matches) keywordFlagged++;
    const p = probabilities.get(row)!;
    watched.forEach((c, j) => {
      if (set.includes(c)) holding[j]++;
      if (labels[row] === c) {
        ofCategory[j]++;
        if (isFlaggedRow) caught[j]++;
        if (matches) keywordCaught[j]++;
      }
      if (!isFlaggedRow) addScore(pile[j], p[c]);
    });
  }
  const decided = watched.map((c) => rows.decided.filter((row) => labels[row] === c).length);
  const open = rows.open.length;
  const share = (x: number, of: number): number | null => (of > 0 ? x / of : null);
  // As the service does: the random verdicts held out of the watched thresholds whose items the sets clear.
  const sample = rows.calibration.filter((row) => inEstimationFold(row) && !isFlagged(row));
  const perCategory: Record<string, WatchedCategoryFigures> = {};
  watched.forEach((c, j) => {
    const m = estimatePopulationCount(
      sample.map((row) => (labels[row] === c ? 1 : 0)),
      sample.map((row) => probabilities.get(row)![c]),
      { scored: pile[j], unscored: 0 },
    );
    const cleared = ofCategory[j] - caught[j];
    perCategory[classes[c]] = {
      open: ofCategory[j],
      recall: share(caught[j], ofCategory[j]),
      caught: share(decided[j] + caught[j], decided[j] + ofCategory[j]),
      decided: decided[j],
      flagged: holding[j],
      load: open > 0 ? holding[j] / open : 0,
      cleared,
      clearedEstimate: {
        estimate: m.estimate,
        lower: m.lower,
        upper: m.upper,
        method: m.method,
        randomVerdicts: m.labelled,
        ofCategory: m.events,
      },
      inInterval: m.lower <= cleared && cleared <= m.upper,
      ...(seedMatch
        ? {
            keywordBaseline: {
              recall: share(keywordCaught[j], ofCategory[j]),
              load: open > 0 ? keywordFlagged / open : 0,
            },
          }
        : {}),
    };
  });
  return {
    open,
    flagged,
    cleared: open - flagged,
    load: open > 0 ? flagged / open : 0,
    perCategory,
    ...(seedMatch ? { keywordBaseline: { flagged: keywordFlagged, load: open > 0 ? keywordFlagged / open : 0 } } : {}),
  };
}

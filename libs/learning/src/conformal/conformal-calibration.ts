import type { StoredJson } from '../stored-json.js';
import { assertAlpha, assertLabel, assertProbabilities } from '../probability-checks.js';
import type { Rng } from '../random/rng.js';
import { calibrationSizeNeeded, conformalRank } from './conformal-quantile.js';
import { apsScore, lacScore } from './nonconformity.js';

export type NonconformityScore = 'lac' | 'aps';
/** `marginal`: one threshold; `per-category`: Mondrian, one threshold per category. */
export type CalibrationMode = 'marginal' | 'per-category';

/** Serialised form of a {@link ConformalCalibration}. */
export interface ConformalCalibrationJson {
  type: 'cribra.conformal-calibration';
  version: 1;
  categories: string[];
  /** True when the APS scores were randomised (Z_(r−1) + U·p_y). */
  apsRandomized: boolean;
  /** All calibration scores, ascending. */
  lac: number[];
  aps: number[];
  /** Scores of the calibration items of each category, ascending. */
  perCategory: { lac: number[][]; aps: number[][] };
}

/** A threshold for one score, mode, α (and category under Mondrian). */
export interface ConformalThreshold {
  /** q̂, or +∞ when k > n (every category is then in the set). */
  threshold: number;
  /** k = ⌈(n + 1)(1 − α)⌉. */
  rank: number;
  /** Calibration scores available. */
  n: number;
  /** More calibration items needed before the threshold is finite (0 when it is). */
  needMore: number;
}

function ascending(values: number[]): Float64Array {
  return Float64Array.from(values).sort();
}

function thresholdOf(sorted: Float64Array, alpha: number): ConformalThreshold {
  const n = sorted.length;
  const rank = conformalRank(n, alpha);
  if (rank > n) return { threshold: Number.POSITIVE_INFINITY, rank, n, needMore: calibrationSizeNeeded(n, alpha) - n };
  return { threshold: sorted[rank - 1], rank, n, needMore: 0 };
}

/**
 * Stored split-conformal calibration: the sorted LAC and APS nonconformity
 * scores of the calibration items, overall and per category, from which the
 * threshold for any α is read in O(1) (Vovk et al. 2005; Angelopoulos &
 * Bates 2021, §1; per category: Vovk, Lindsay, Nouretdinov & Gammerman 2003,
 * "Mondrian confidence machine"; Vovk 2012).
 */
export class ConformalCalibration {
  private constructor(
    readonly categories: readonly string[],
    readonly apsRandomized: boolean,
    private readonly lac: Float64Array,
    private readonly aps: Float64Array,
    private readonly lacByCategory: Float64Array[],
    private readonly apsByCategory: Float64Array[],
  ) {}

  /**
   * Scores calibration items (their predicted probabilities and true
   * categories). The calibration items must be exchangeable with the items
   * the sets will be used on (uniform random draws) and must not have trained
   * the model.
   *
   * @param probabilities one probability vector per item (length = categories)
   * @param labels        true category index of each item
   * @param options.rng   randomises the APS scores when given (see {@link apsScore})
   */
  static fromScores(
    categories: readonly string[],
    probabilities: readonly ArrayLike<number>[],
    labels: readonly number[],
    options: { rng?: Rng } = {},
  ): ConformalCalibration {
    if (!Array.isArray(categories) || categories.length < 1)
      throw new RangeError('categories must list at least one category');
    if (probabilities.length !== labels.length) {
      throw new RangeError(`probabilities (${probabilities.length}) and labels (${labels.length}) differ in length`);
    }
    const k = categories.length;
    const lac: number[] = [];
    const aps: number[] = [];
    const lacBy: number[][] = Array.from({ length: k }, () => []);
    const apsBy: number[][] = Array.from({ length: k }, () => []);
    probabilities.forEach((p, i) => {
      assertProbabilities(p, `probabilities[${i}]`);
      if (p.length !== k) throw new RangeError(`probabilities[${i}] has ${p.length} entries, expected ${k}`);
      const y = labels[i];
      assertLabel(y, k, `labels[${i}]`);
      const l = lacScore(p, y);
      const a = apsScore(p, y, options.rng?.next());
      lac.push(l);
      aps.push(a);
      lacBy[y].push(l);
      apsBy[y].push(a);
    });
    return new ConformalCalibration(
      // Array.isArray above narrowed the readonly list to any[].
      [...(categories as readonly string[])],
      options.rng !== undefined,
      ascending(lac),
      ascending(aps),
      lacBy.map(ascending),
      apsBy.map(ascending),
    );
  }

  /** Number of calibration items, overall or of one category. */
  size(category?: number): number {
    if (category === undefined) return this.lac.length;
    assertLabel(category, this.categories.length, 'category');
    return this.lacByCategory[category].length;
  }

  /** Sorted scores (a copy), overall or of one category. */
  scores(score: NonconformityScore, category?: number): Float64Array {
    return this.sorted(score, category).slice();
  }

  private sorted(score: NonconformityScore, category?: number): Float64Array {
    if (!['lac', 'aps'].includes(score)) throw new RangeError(`score must be lac or aps, got ${score}`);
    if (category === undefined) return score === 'lac' ? this.lac : this.aps;
    assertLabel(category, this.categories.length, 'category');
    return score === 'lac' ? this.lacByCategory[category] : this.apsByCategory[category];
  }

  /** The marginal threshold at miscoverage α. */
  threshold(score: NonconformityScore, alpha: number): ConformalThreshold {
    assertAlpha(alpha);
    return thresholdOf(this.sorted(score), alpha);
  }

  /** The threshold of one category (Mondrian) at miscoverage α. */
  categoryThreshold(score: NonconformityScore, alpha: number, category: number): ConformalThreshold {
    assertAlpha(alpha);
    return thresholdOf(this.sorted(score, category), alpha);
  }

  /**
   * The thresholds a prediction set compares with, one per category: the
   * marginal threshold repeated, or each category's own.
   */
  thresholds(score: NonconformityScore, alpha: number, mode: CalibrationMode): ConformalThreshold[] {
    if (!['marginal', 'per-category'].includes(mode))
      throw new RangeError(`mode must be marginal or per-category, got ${mode}`);
    if (mode === 'marginal') {
      const t = this.threshold(score, alpha);
      return this.categories.map(() => t);
    }
    return this.categories.map((_, c) => this.categoryThreshold(score, alpha, c));
  }

  toJSON(): ConformalCalibrationJson {
    return {
      type: 'cribra.conformal-calibration',
      version: 1,
      categories: [...this.categories],
      apsRandomized: this.apsRandomized,
      lac: Array.from(this.lac),
      aps: Array.from(this.aps),
      perCategory: {
        lac: this.lacByCategory.map((s) => Array.from(s)),
        aps: this.apsByCategory.map((s) => Array.from(s)),
      },
    };
  }

  /** Restores a calibration written by {@link ConformalCalibration.toJSON}. */
  static fromJSON(json: StoredJson<ConformalCalibrationJson>): ConformalCalibration {
    if (json?.type !== 'cribra.conformal-calibration')
      throw new TypeError(`not a conformal calibration: type ${String(json?.type)}`);
    if (json.version !== 1) throw new RangeError(`unsupported conformal calibration version ${String(json.version)}`);
    const k = json.categories.length;
    if (json.perCategory.lac.length !== k || json.perCategory.aps.length !== k) {
      throw new RangeError(`perCategory must hold ${k} score lists per score`);
    }
    const total = json.perCategory.lac.reduce((s, l) => s + l.length, 0);
    if (json.lac.length !== total || json.aps.length !== total)
      throw new RangeError('overall and per-category score counts disagree');
    return new ConformalCalibration(
      json.categories,
      json.apsRandomized,
      ascending(json.lac),
      ascending(json.aps),
      json.perCategory.lac.map(ascending),
      json.perCategory.aps.map(ascending),
    );
  }
}

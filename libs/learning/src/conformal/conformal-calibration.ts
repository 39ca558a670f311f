import type { StoredJson } from '../stored-json.js';
import { assertAlpha, assertLabel, assertProbabilities } from '../probability-checks.js';
import type { Rng } from '../random/rng.js';
import { calibrationSizeNeeded, conformalRank } from './conformal-quantile.js';
import { apsScore, lacScore } from './nonconformity.js';
import { assertConfidence, trainingConditionalRank, trainingConditionalSizeNeeded } from './training-conditional.js';

export type NonconformityScore = 'lac' | 'aps';
/** `marginal`: one threshold; `per-category`: Mondrian, one threshold per category. */
export type CalibrationMode = 'marginal' | 'per-category';

/** Serialised form of a {@link ConformalCalibration}. */
export interface ConformalCalibrationJson {
  type: 'cribra.conformal-calibration';
  /** 1: no held-out scores; 2: adds `heldOut`. */
  version: 1 | 2;
  categories: string[];
  /** True when the APS scores were randomised (Z_(r−1) + U·p_y). */
  apsRandomized: boolean;
  /** All calibration scores, ascending. */
  lac: number[];
  aps: number[];
  /** Scores of the calibration items of each category, ascending. */
  perCategory: { lac: number[][]; aps: number[][] };
  /**
   * The part of each category's scores that belongs to held-out items
   * (ascending; a sub-multiset of `perCategory`): left out of the thresholds
   * of the categories named in {@link ThresholdOptions.holdOut}.
   */
  heldOut?: { lac: number[][]; aps: number[][] };
}

/** How a threshold is chosen besides its α. */
export interface ThresholdOptions {
  /**
   * Absent or null: expected coverage at least 1 − α (rank
   * ⌈(n + 1)(1 − α)⌉). A number in (0, 1): coverage at least 1 − α with at
   * least this probability over the calibration draws (the
   * training-conditional rank, {@link trainingConditionalRank}).
   */
  confidence?: number | null;
  /**
   * Category indices whose thresholds leave out the held-out items' scores,
   * so that whether a held-out item's set holds one of these categories does
   * not depend on the item's own label (Mondrian calibration only).
   */
  holdOut?: readonly number[];
}

/** A threshold for one score, mode, α (and category under Mondrian). */
export interface ConformalThreshold {
  /** q̂, or +∞ when k > n (every category is then in the set). */
  threshold: number;
  /** k: ⌈(n + 1)(1 − α)⌉, or the training-conditional rank when a confidence is asked. */
  rank: number;
  /** Calibration scores the threshold was read from. */
  n: number;
  /** More calibration items (of these) needed before the threshold is finite (0 when it is). */
  needMore: number;
  /** The confidence asked, or null for expected coverage. */
  confidence: number | null;
  /** Scores of held-out items left out of this threshold. */
  heldOut: number;
}

function ascending(values: readonly number[]): Float64Array {
  return Float64Array.from(values).sort();
}

/** `all` without one occurrence of each value of `part` (both ascending). */
function withoutPart(all: Float64Array, part: Float64Array): Float64Array {
  const out = new Float64Array(all.length - part.length);
  let j = 0;
  let o = 0;
  for (const v of all) {
    if (j < part.length && v === part[j]) j++;
    else out[o++] = v;
  }
  if (j !== part.length || o !== out.length) throw new RangeError('held-out scores are not part of the scores');
  return out;
}

function thresholdOf(sorted: Float64Array, alpha: number, confidence: number | null, heldOut: number) {
  const n = sorted.length;
  const rank = confidence === null ? conformalRank(n, alpha) : trainingConditionalRank(n, alpha, confidence);
  if (rank > n) {
    const needed =
      confidence === null ? calibrationSizeNeeded(n, alpha) : trainingConditionalSizeNeeded(n, alpha, confidence);
    return { threshold: Number.POSITIVE_INFINITY, rank, n, needMore: needed - n, confidence, heldOut };
  }
  return { threshold: sorted[rank - 1], rank, n, needMore: 0, confidence, heldOut };
}

/**
 * Stored split-conformal calibration: the sorted LAC and APS nonconformity
 * scores of the calibration items, overall and per category, from which the
 * threshold for any α is read in O(1) (Vovk et al. 2005; Angelopoulos &
 * Bates 2021, §1; per category: Vovk, Lindsay, Nouretdinov & Gammerman 2003,
 * "Mondrian confidence machine"; Vovk 2012). Per category it also keeps which
 * scores belong to held-out items, so that the thresholds of chosen
 * categories can leave them out (see {@link ThresholdOptions.holdOut}).
 */
export class ConformalCalibration {
  /** Thresholds already read, by score, category, α, confidence and hold-out. */
  private readonly memo = new Map<string, ConformalThreshold>();
  private readonly keptCache = new Map<string, Float64Array>();

  private constructor(
    readonly categories: readonly string[],
    readonly apsRandomized: boolean,
    private readonly lac: Float64Array,
    private readonly aps: Float64Array,
    private readonly lacByCategory: Float64Array[],
    private readonly apsByCategory: Float64Array[],
    private readonly lacHeldOut: Float64Array[],
    private readonly apsHeldOut: Float64Array[],
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
   * @param options.heldOut marks the items whose scores thresholds may leave out (one flag per item)
   */
  static fromScores(
    categories: readonly string[],
    probabilities: readonly ArrayLike<number>[],
    labels: readonly number[],
    options: { rng?: Rng; heldOut?: readonly boolean[] } = {},
  ): ConformalCalibration {
    if (!Array.isArray(categories) || categories.length < 1)
      throw new RangeError('categories must list at least one category');
    if (probabilities.length !== labels.length) {
      throw new RangeError(`probabilities (${probabilities.length}) and labels (${labels.length}) differ in length`);
    }
    if (options.heldOut !== undefined && options.heldOut.length !== labels.length) {
      throw new RangeError(
        `options.heldOut (${options.heldOut.length}) and labels (${labels.length}) differ in length`,
      );
    }
    const k = categories.length;
    const lac: number[] = [];
    const aps: number[] = [];
    const lacBy: number[][] = Array.from({ length: k }, () => []);
    const apsBy: number[][] = Array.from({ length: k }, () => []);
    const lacOut: number[][] = Array.from({ length: k }, () => []);
    const apsOut: number[][] = Array.from({ length: k }, () => []);
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
      if (options.heldOut?.[i] === true) {
        lacOut[y].push(l);
        apsOut[y].push(a);
      }
    });
    return new ConformalCalibration(
      // Array.isArray above narrowed the readonly list to any[].
      [...(categories as readonly string[])],
      options.rng !== undefined,
      ascending(lac),
      ascending(aps),
      lacBy.map(ascending),
      apsBy.map(ascending),
      lacOut.map(ascending),
      apsOut.map(ascending),
    );
  }

  /** Number of calibration items, overall or of one category. */
  size(category?: number): number {
    if (category === undefined) return this.lac.length;
    assertLabel(category, this.categories.length, 'category');
    return this.lacByCategory[category].length;
  }

  /** Number of held-out calibration items of one category (or of all). */
  heldOutSize(category?: number): number {
    if (category === undefined) return this.lacHeldOut.reduce((s, l) => s + l.length, 0);
    assertLabel(category, this.categories.length, 'category');
    return this.lacHeldOut[category].length;
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

  /** A category's scores without those of held-out items. */
  private kept(score: NonconformityScore, category: number): Float64Array {
    const key = `${score}:${category}`;
    let kept = this.keptCache.get(key);
    if (!kept) {
      const out = score === 'lac' ? this.lacHeldOut[category] : this.apsHeldOut[category];
      kept = withoutPart(this.sorted(score, category), out);
      this.keptCache.set(key, kept);
    }
    return kept;
  }

  private remember(key: string, make: () => ConformalThreshold): ConformalThreshold {
    let t = this.memo.get(key);
    if (!t) {
      t = make();
      this.memo.set(key, t);
    }
    return t;
  }

  /** The marginal threshold at miscoverage α. */
  threshold(score: NonconformityScore, alpha: number, options: ThresholdOptions = {}): ConformalThreshold {
    assertAlpha(alpha);
    const confidence = checkConfidence(options.confidence);
    if (options.holdOut !== undefined && options.holdOut.length > 0)
      throw new RangeError('options.holdOut needs per-category calibration');
    return this.remember(`${score}|*|${alpha}|${confidence}`, () =>
      thresholdOf(this.sorted(score), alpha, confidence, 0),
    );
  }

  /** The threshold of one category (Mondrian) at miscoverage α. */
  categoryThreshold(
    score: NonconformityScore,
    alpha: number,
    category: number,
    options: ThresholdOptions = {},
  ): ConformalThreshold {
    assertAlpha(alpha);
    const confidence = checkConfidence(options.confidence);
    const sorted = this.sorted(score, category);
    const holdOut = this.checkHoldOut(options.holdOut).includes(category);
    return this.remember(`${score}|${category}|${alpha}|${confidence}|${holdOut}`, () =>
      holdOut
        ? thresholdOf(this.kept(score, category), alpha, confidence, sorted.length - this.kept(score, category).length)
        : thresholdOf(sorted, alpha, confidence, 0),
    );
  }

  private checkHoldOut(holdOut: readonly number[] | undefined): readonly number[] {
    if (holdOut === undefined) return [];
    if (!isList(holdOut)) throw new TypeError('options.holdOut must be a list of category indices');
    holdOut.forEach((c, i) => assertLabel(c, this.categories.length, `options.holdOut[${i}]`));
    return holdOut;
  }

  /**
   * The thresholds a prediction set compares with, one per category: the
   * marginal threshold repeated, or each category's own. Under Mondrian
   * calibration `alpha` may give each category its own miscoverage.
   */
  thresholds(
    score: NonconformityScore,
    alpha: number | readonly number[],
    mode: CalibrationMode,
    options: ThresholdOptions = {},
  ): ConformalThreshold[] {
    if (!['marginal', 'per-category'].includes(mode))
      throw new RangeError(`mode must be marginal or per-category, got ${mode}`);
    const alphas = this.alphasOf(alpha);
    if (mode === 'marginal') {
      if (alphas.some((a) => a !== alphas[0]))
        throw new RangeError('alpha: one miscoverage per category needs per-category calibration');
      const t = this.threshold(score, alphas[0], options);
      return this.categories.map(() => t);
    }
    return this.categories.map((_, c) => this.categoryThreshold(score, alphas[c], c, options));
  }

  private alphasOf(alpha: number | readonly number[]): readonly number[] {
    if (typeof alpha === 'number') return this.categories.map(() => alpha);
    if (!isList(alpha) || alpha.length !== this.categories.length)
      throw new RangeError(
        `alpha must be a number or a list of ${this.categories.length} miscoverages, one per category`,
      );
    alpha.forEach((a, i) => assertAlpha(a, `alpha[${i}]`));
    return alpha;
  }

  toJSON(): ConformalCalibrationJson {
    return {
      type: 'cribra.conformal-calibration',
      version: 2,
      categories: [...this.categories],
      apsRandomized: this.apsRandomized,
      lac: Array.from(this.lac),
      aps: Array.from(this.aps),
      perCategory: {
        lac: this.lacByCategory.map((s) => Array.from(s)),
        aps: this.apsByCategory.map((s) => Array.from(s)),
      },
      heldOut: {
        lac: this.lacHeldOut.map((s) => Array.from(s)),
        aps: this.apsHeldOut.map((s) => Array.from(s)),
      },
    };
  }

  /** Restores a calibration written by {@link ConformalCalibration.toJSON} (format 1 has no held-out scores). */
  static fromJSON(json: StoredJson<ConformalCalibrationJson>): ConformalCalibration {
    if (json?.type !== 'cribra.conformal-calibration')
      throw new TypeError(`not a conformal calibration: type ${String(json?.type)}`);
    if (json.version !== 1 && json.version !== 2)
      throw new RangeError(`unsupported conformal calibration version ${String(json.version)}`);
    const k = json.categories.length;
    if (json.perCategory.lac.length !== k || json.perCategory.aps.length !== k) {
      throw new RangeError(`perCategory must hold ${k} score lists per score`);
    }
    const total = json.perCategory.lac.reduce((s, l) => s + l.length, 0);
    if (json.lac.length !== total || json.aps.length !== total)
      throw new RangeError('overall and per-category score counts disagree');
    const none = () => Array.from({ length: k }, () => [] as number[]);
    const heldOut = json.version === 2 && json.heldOut ? json.heldOut : { lac: none(), aps: none() };
    if (heldOut.lac.length !== k || heldOut.aps.length !== k)
      throw new RangeError(`heldOut must hold ${k} score lists per score`);
    const calibration = new ConformalCalibration(
      json.categories,
      json.apsRandomized,
      ascending(json.lac),
      ascending(json.aps),
      json.perCategory.lac.map(ascending),
      json.perCategory.aps.map(ascending),
      heldOut.lac.map(ascending),
      heldOut.aps.map(ascending),
    );
    // Fails now, not at the first threshold, when a held-out list is not part of its category's scores.
    for (let c = 0; c < k; c++) for (const s of ['lac', 'aps'] as const) calibration.kept(s, c);
    return calibration;
  }
}

/** Array.isArray without its narrowing, which turns a readonly number[] into any[]. */
function isList(value: unknown): boolean {
  return Array.isArray(value);
}

function checkConfidence(confidence: number | null | undefined): number | null {
  if (confidence === undefined || confidence === null) return null;
  assertConfidence(confidence, 'options.confidence');
  return confidence;
}

import { createFeaturizer, type FeaturizerOptions } from '../features/hashed-featurizer.js';
import { IdfTable } from '../features/idf-table.js';
import type { SparseVector } from '../features/sparse-vector.js';
import { tfidf } from '../features/tfidf.js';
import { DEFAULT_C, trainLogisticModel, type TrainOptions } from '../classifier/train-logistic.js';
import type { LogisticModel } from '../classifier/logistic-model.js';
import { remapCategories, type ModelExport } from '../classifier/model-export.js';
import {
  ConformalCalibration,
  type CalibrationMode,
  type NonconformityScore,
} from '../conformal/conformal-calibration.js';
import { predictionSet, type PredictionSetOptions } from '../conformal/prediction-set.js';
import { calibrationSizeNeeded } from '../conformal/conformal-quantile.js';
import { accuracy } from '../metrics/accuracy.js';
import { macroF1 } from '../metrics/macro-f1.js';
import { createRng, shuffleInPlace, type Rng } from '../random/rng.js';
import { tuneC, type TuneCResult } from '../classifier/tune-c.js';
import {
  avoidNearDuplicate,
  byPriority,
  drawKindOf,
  drawPlan,
  NEAR_DUPLICATE_CANDIDATES,
  priorityOf,
  SAMPLING_STRATEGIES,
  screenPriority,
  uniformPick,
  type DrawSource,
  type SamplingStrategy,
} from '../sampling/sampling-policy.js';
import { inEstimationFold } from '../screening/estimation-fold.js';
import { compileSeedTerms } from '../text/seed-terms.js';
import { screeningFigures, type ScreeningFigures } from './rehearsal-screening.js';

export interface RehearsalOptions {
  /** Target coverage 1 − α. */
  target: number;
  calibration: CalibrationMode;
  score: NonconformityScore;
  /** The desk's strategy (see the sampling policy), or `random`: every draw uniform (the baseline). */
  strategy: SamplingStrategy | 'random';
  randomShare: number;
  /** Share of the review lane (default 0); it serves only when `watch` names a category. */
  screenShare?: number;
  /**
   * Watched categories (default none): the review lane serves items whose set holds one, their thresholds leave
   * out the estimation fold (as a desk's do), and every curve point measures the screening (see
   * {@link screeningFigures}). Needs per-category calibration.
   */
  watch?: readonly string[];
  /** Seed terms (category → terms) for the keyword baseline of the screening figures; needs `watch`. */
  seedTerms?: Record<string, string[]>;
  /** Uniform random verdicts before the first model (they train it). */
  start: number;
  batch: number;
  /** Total verdicts (training + calibration) to simulate. */
  budget: number;
  testShare: number;
  seed: number;
  /** Also run the uniform-random baseline. */
  compareRandom: boolean;
  featurizer?: FeaturizerOptions;
  training?: Omit<TrainOptions, 'categories' | 'hashBits'>;
  /**
   * A model exported from another desk (`model.json`): also run the loop
   * started from it, as a desk created with `startFrom` is (see
   * {@link runRehearsal}). The data must be featurised with its featuriser.
   */
  startFrom?: ModelExport;
  /** Called after each curve point: points done, points expected. */
  onProgress?: (done: number, total: number) => void;
}

/** Coverage of the prediction sets on one population of items. */
export interface CoverageFigures {
  items: number;
  /** Share of the items whose true category is in their prediction set. */
  coverage: number;
  meanSetSize: number;
  /** Coverage among the items of each category (null if it has none). */
  perCategoryCoverage: Record<string, number | null>;
}

export interface CurvePoint {
  labels: number;
  trainLabels: number;
  calibrationLabels: number;
  /** Calibration (random) verdicts of each category. */
  calibrationPerCategory: Record<string, number>;
  /**
   * True when the sets can leave a category out: every category (per-category
   * calibration) or the pool (marginal) has enough calibration verdicts for a
   * finite threshold at the target; before that, sets hold every category.
   */
  setsInformative: boolean;
  /** Measured on the hold-out test set. */
  accuracy: number;
  macroF1: number;
  /** Hold-out test set: share of items whose true category is in their prediction set. */
  coverage: number;
  meanSetSize: number;
  sureShare: number;
  unfamiliarShare: number;
  /** Hold-out test set: coverage among the items of each category (null if it has none). */
  perCategoryCoverage: Record<string, number | null>;
  /**
   * The items still open at this point (pool items without a verdict): the
   * population a desk shows sets on. The primary coverage figure.
   */
  open: CoverageFigures;
  /** With watched categories: flagged and cleared open items, and what the cleared pile holds against its estimate. */
  screening?: ScreeningFigures;
}

export interface RehearsalCurve {
  curve: CurvePoint[];
  /** First curve point whose macro-F1 reaches that share of the full-pool model's (null: never). */
  labelsToReach: { '0.95': number | null; '0.98': number | null };
  /** Calibration (random) verdicts at the first point whose sets can leave a category out (null: never). */
  randomVerdictsUntilInformative: number | null;
}

export interface RehearsalResult extends RehearsalCurve {
  classes: string[];
  pool: number;
  test: number;
  target: number;
  seed: number;
  calibration: CalibrationMode;
  /** Inverse regularisation strength C the models were trained with. */
  c: number;
  /** Why the figures may not answer the question (input too small for the target, …). */
  warnings: string[];
  full: { accuracy: number; macroF1: number };
  random?: RehearsalCurve;
  /** With watched categories: the screening at the last curve point. */
  screening?: ScreeningFigures;
  /** The loop started from another desk's model (with `startFrom`). */
  startFrom?: TransferCurve;
  timings: { featurizeMs: number; trainMsMean: number; scoreMsMean: number };
}

/** The loop started from an exported model, beside the one that starts cold. */
export interface TransferCurve extends RehearsalCurve {
  source: { deskId: number; deskName: string; version: number };
  /** Categories of the data the model never trained (probability 0 until the desk's own verdicts train them). */
  untrained: string[];
  /** Categories of the model the data does not have. */
  dropped: string[];
  /**
   * Verdicts to reach that share of the full model's macro-F1 without the start minus with it; null when the run
   * with the start never reaches it, or the one without does not (then more than `budget` minus the verdicts with it).
   */
  verdictsSaved: { '0.95': number | null; '0.98': number | null };
}

/**
 * Training verdicts of each category the transferred model knows that a desk started from it needs before it trains
 * on its own verdicts (with the model as prior); until then it serves the transferred model. The service's rule
 * (`FIRST_MODEL_MIN_PER_CATEGORY` in libs/models) is the same number.
 */
export const TRANSFER_MIN_PER_CATEGORY = 2;

export interface LabelledItem {
  text: string;
  label: string;
}

/** Prepared data shared by several rehearsals (featurised once). */
export interface RehearsalData {
  classes: string[];
  /** Category index of every item. */
  labels: Int32Array;
  vectors: SparseVector[];
  pool: number[];
  test: number[];
  hashBits: number;
  /** Hashed term counts of every item (tf-idf under another idf table needs them). */
  counts: readonly SparseVector[];
  /** The texts (seed terms are matched on them). */
  texts: readonly string[];
  featurizeMs: number;
}

function checkOptions(o: RehearsalOptions): void {
  const fail = (flag: string, value: unknown, rule: string): never => {
    throw new RangeError(`${flag} ${rule}, got ${String(value)}`);
  };
  if (!(o.target > 0 && o.target < 1)) fail('target', o.target, 'must be in (0, 1)');
  if (!['marginal', 'per-category'].includes(o.calibration))
    fail('calibration', o.calibration, 'must be marginal or per-category');
  if (!['lac', 'aps'].includes(o.score)) fail('score', o.score, 'must be lac or aps');
  if (![...SAMPLING_STRATEGIES, 'random'].includes(o.strategy)) {
    fail('strategy', o.strategy, `must be ${SAMPLING_STRATEGIES.join(', ')} or random`);
  }
  if (!(o.randomShare >= 0 && o.randomShare <= 1)) fail('randomShare', o.randomShare, 'must be in [0, 1]');
  const screenShare = o.screenShare ?? 0;
  // A hair of slack: 0.8 + 0.2 leave 1 − 0.8 = 0.19999999999999996 for the lane in floating point.
  if (!(screenShare >= 0 && screenShare <= 1 - o.randomShare + 1e-9))
    fail('screenShare', screenShare, 'must be in [0, 1 − randomShare]');
  if (!Number.isInteger(o.start) || o.start < 1) fail('start', o.start, 'must be a positive integer');
  if (!Number.isInteger(o.batch) || o.batch < 1) fail('batch', o.batch, 'must be a positive integer');
  if (!Number.isInteger(o.budget) || o.budget < o.start)
    fail('budget', o.budget, `must be an integer ≥ start (${o.start})`);
  if (!(o.testShare > 0 && o.testShare < 1)) fail('testShare', o.testShare, 'must be in (0, 1)');
  if (!Number.isInteger(o.seed)) fail('seed', o.seed, 'must be an integer');
  if ((o.watch?.length ?? 0) > 0 && o.calibration !== 'per-category')
    fail('calibration', o.calibration, 'must be per-category with watched categories (marginal promises no category)');
  if (o.seedTerms !== undefined && (o.watch?.length ?? 0) === 0) fail('seedTerms', 'given', 'need watched categories');
}

/** Category indices of the watched categories; an unknown one is refused. */
function watchedOf(data: RehearsalData, options: RehearsalOptions): number[] {
  return (options.watch ?? []).map((c) => {
    const i = data.classes.indexOf(c);
    if (i < 0) throw new RangeError(`watch: ${c} is not a category of the data (${data.classes.join(', ')})`);
    return i;
  });
}

/** The sets' options: a desk's, whose watched categories' thresholds leave out the estimation fold. */
function setOptionsOf(data: RehearsalData, options: RehearsalOptions): PredictionSetOptions {
  const watched = watchedOf(data, options);
  return {
    alpha: 1 - options.target,
    score: options.score,
    mode: options.calibration,
    ...(watched.length > 0 ? { holdOut: watched } : {}),
  };
}

/**
 * Shuffles with the seed, holds out `testShare` of the items as a test set,
 * and featurises everything once: hashed counts, idf from the pool's
 * document frequencies (test items are never drawn and do not inform idf),
 * tf-idf.
 */
export function prepareRehearsal(
  items: readonly LabelledItem[],
  options: Pick<RehearsalOptions, 'testShare' | 'seed' | 'featurizer'> & {
    /** Hashed counts of the items, if already computed with the same featuriser options. */
    counts?: readonly SparseVector[];
  },
): RehearsalData {
  const classes = [...new Set(items.map((i) => i.label))].sort();
  if (classes.length < 2)
    throw new RangeError(`the labels hold ${classes.length} class(es); a rehearsal needs at least 2`);
  const index = new Map(classes.map((c, i) => [c, i]));
  const labels = Int32Array.from(items, (i) => index.get(i.label)!);
  const order = shuffleInPlace(
    items.map((_, i) => i),
    createRng(options.seed),
  );
  const nTest = Math.round(items.length * options.testShare);
  if (nTest < 1 || nTest >= items.length)
    throw new RangeError(`testShare ${options.testShare} leaves no test or no pool items of ${items.length}`);
  const test = order.slice(0, nTest);
  const pool = order.slice(nTest);
  const started = performance.now();
  const featurizer = createFeaturizer(options.featurizer);
  if (options.counts !== undefined && options.counts.length !== items.length) {
    throw new RangeError(`counts has ${options.counts.length} rows for ${items.length} items`);
  }
  const counts = options.counts ?? items.map((i) => featurizer.counts(i.text));
  const idf = IdfTable.create(featurizer.hashBits);
  for (const i of pool) idf.addDocument(counts[i]);
  const vectors = counts.map((c) => tfidf(c, idf));
  return {
    classes,
    labels,
    vectors,
    pool,
    test,
    hashBits: featurizer.hashBits,
    counts,
    texts: items.map((i) => i.text),
    featurizeMs: performance.now() - started,
  };
}

interface Timing {
  trainMs: number[];
  scoreMs: number[];
}

/** Trains on `rows`, from the previous model's weights when there is one (as the service's retrain does). */
function train(
  data: RehearsalData,
  rows: number[],
  options: RehearsalOptions,
  timing: Timing,
  previous: LogisticModel | null = null,
  prior: LogisticModel | null = null,
): LogisticModel {
  const started = performance.now();
  const model = trainLogisticModel(
    rows.map((i) => data.vectors[i]),
    rows.map((i) => data.classes[data.labels[i]]),
    { categories: data.classes, hashBits: data.hashBits, warmStart: previous, prior, ...options.training },
  );
  timing.trainMs.push(performance.now() - started);
  return model;
}

function coverageOn(
  data: RehearsalData,
  rows: readonly number[],
  probabilities: Map<number, Float64Array>,
  calibration: ConformalCalibration,
  options: RehearsalOptions,
  each?: (row: number, p: Float64Array, set: number[], call: string) => void,
): CoverageFigures {
  const setOptions = setOptionsOf(data, options);
  const k = data.classes.length;
  let covered = 0;
  let setSizes = 0;
  const catCovered = new Float64Array(k);
  const catTotal = new Float64Array(k);
  for (const i of rows) {
    const p = probabilities.get(i)!;
    const y = data.labels[i];
    const set = predictionSet(p, calibration, setOptions);
    const hit = set.categories.includes(y) ? 1 : 0;
    covered += hit;
    catCovered[y] += hit;
    catTotal[y]++;
    setSizes += set.categories.length;
    each?.(i, p, set.categories, set.call);
  }
  const n = rows.length;
  const perCategoryCoverage: Record<string, number | null> = {};
  data.classes.forEach((c, j) => (perCategoryCoverage[c] = catTotal[j] > 0 ? catCovered[j] / catTotal[j] : null));
  return {
    items: n,
    coverage: n > 0 ? covered / n : Number.NaN,
    meanSetSize: n > 0 ? setSizes / n : Number.NaN,
    perCategoryCoverage,
  };
}

function measure(
  data: RehearsalData,
  trainRows: number[],
  calibrationRows: number[],
  openRows: number[],
  probabilities: Map<number, Float64Array>,
  calibration: ConformalCalibration,
  options: RehearsalOptions,
  seedMatch: ((row: number) => boolean) | undefined,
): CurvePoint {
  const k = data.classes.length;
  const truth: number[] = [];
  const predicted: number[] = [];
  let sure = 0;
  let unfamiliar = 0;
  const holdOut = coverageOn(data, data.test, probabilities, calibration, options, (i, p, _set, call) => {
    let best = 0;
    for (let c = 1; c < k; c++) if (p[c] > p[best]) best = c;
    truth.push(data.labels[i]);
    predicted.push(best);
    if (call === 'sure') sure++;
    if (call === 'unfamiliar') unfamiliar++;
  });
  const open = coverageOn(data, openRows, probabilities, calibration, options);
  const watched = watchedOf(data, options);
  const needed = calibrationSizeNeeded(0, 1 - options.target);
  const calibrationPerCategory: Record<string, number> = {};
  data.classes.forEach((c) => (calibrationPerCategory[c] = 0));
  for (const i of calibrationRows) calibrationPerCategory[data.classes[data.labels[i]]]++;
  const setsInformative =
    options.calibration === 'marginal'
      ? calibrationRows.length >= needed
      : Object.values(calibrationPerCategory).every((n) => n >= needed);
  const n = data.test.length;
  return {
    labels: trainRows.length + calibrationRows.length,
    trainLabels: trainRows.length,
    calibrationLabels: calibrationRows.length,
    calibrationPerCategory,
    setsInformative,
    accuracy: accuracy(truth, predicted, k),
    macroF1: macroF1(truth, predicted, k),
    coverage: holdOut.coverage,
    meanSetSize: holdOut.meanSetSize,
    sureShare: sure / n,
    unfamiliarShare: unfamiliar / n,
    perCategoryCoverage: holdOut.perCategoryCoverage,
    open,
    ...(watched.length > 0
      ? {
          screening: screeningFigures(
            data.classes,
            data.labels,
            watched,
            { open: openRows, calibration: calibrationRows, decided: [...trainRows, ...calibrationRows] },
            probabilities,
            calibration,
            setOptionsOf(data, options),
            seedMatch,
          ),
        }
      : {}),
  };
}

/**
 * Whether each item matches a seed term (any category's, as the desk's keyword baseline flags), computed once per
 * item on demand; undefined without seed terms.
 */
function seedMatcherOf(data: RehearsalData, options: RehearsalOptions): ((row: number) => boolean) | undefined {
  if (options.seedTerms === undefined) return undefined;
  const matcher = compileSeedTerms(options.seedTerms);
  const known = new Map<number, boolean>();
  return (row) => {
    let hit = known.get(row);
    if (hit === undefined) {
      hit = matcher.count(data.texts[row]) > 0;
      known.set(row, hit);
    }
    return hit;
  };
}

/** Number of curve points a run produces (started from a transferred model: no cold start). */
function pointsOf(data: RehearsalData, options: RehearsalOptions, transferred = false): number {
  const budget = Math.min(options.budget, data.pool.length);
  const cold = transferred ? 0 : coldStart(data, options.start, budget).length;
  return 1 + Math.ceil((budget - cold) / options.batch);
}

/** A transferred model, mapped onto the data's categories, with the data weighed by the idf it was trained with. */
interface Transfer {
  model: LogisticModel;
  vectors: SparseVector[];
  /** Class indices the model trained. */
  known: number[];
}

function transferOf(
  data: RehearsalData,
  start: ModelExport,
): { transfer: Transfer; untrained: string[]; dropped: string[] } {
  if (start.featurizer.hashBits !== data.hashBits)
    throw new RangeError(
      `the model hashes into ${start.featurizer.hashBits} bits and the data into ${data.hashBits}: featurise with the model's settings`,
    );
  const { model, untrained, dropped } = remapCategories(start.classifier, data.classes);
  return {
    transfer: { model, vectors: data.counts.map((c) => tfidf(c, start.idf)), known: [...model.trained] },
    untrained,
    dropped,
  };
}

function runCurve(
  data: RehearsalData,
  options: RehearsalOptions,
  strategy: SamplingStrategy | 'random',
  rng: Rng,
  timing: Timing,
  progress: () => void,
  transfer: Transfer | null = null,
): CurvePoint[] {
  const seedMatch = seedMatcherOf(data, options);
  // A desk marks the estimation fold among its random verdicts; watched categories' thresholds leave it out.
  const watching = (options.watch?.length ?? 0) > 0;
  const budget = Math.min(options.budget, data.pool.length);
  // A desk started from a transferred model has a model at once: no cold start.
  const trainRows = transfer === null ? coldStart(data, options.start, budget) : [];
  const calibrationRows: number[] = [];
  const labelled = new Set(trainRows);
  const curve: CurvePoint[] = [];
  const desk = strategy === 'random' ? null : simulatedDesk(data, options, strategy, rng);
  let model: LogisticModel | null = null;
  for (;;) {
    // Started from a transfer, the desk serves the transferred model until its own training verdicts hold every
    // category the model knows, then trains on them with the transferred weights as prior (as the service does).
    const counts = new Int32Array(data.classes.length);
    for (const i of trainRows) counts[data.labels[i]]++;
    const own = transfer === null || transfer.known.every((c) => counts[c] >= TRANSFER_MIN_PER_CATEGORY);
    if (own) model = train(data, trainRows, options, timing, model, transfer?.model ?? null);
    const current = model;
    const score =
      current !== null
        ? (i: number) => current.predictProba(data.vectors[i])
        : (i: number) => transfer!.model.predictProba(transfer!.vectors[i]);
    const started = performance.now();
    const probabilities = new Map<number, Float64Array>();
    // Score what the service scores: the open items (the next draw looks at
    // them, and they are what the desk shows sets on), the calibration items
    // (the current model never trained on them), and here the test set.
    const openRows = data.pool.filter((i) => !labelled.has(i));
    for (const i of openRows) probabilities.set(i, score(i));
    for (const i of calibrationRows) probabilities.set(i, score(i));
    for (const i of data.test) probabilities.set(i, score(i));
    timing.scoreMs.push(performance.now() - started);
    const calibration = ConformalCalibration.fromScores(
      data.classes,
      calibrationRows.map((i) => probabilities.get(i)!),
      calibrationRows.map((i) => data.labels[i]),
      watching ? { heldOut: calibrationRows.map((i) => inEstimationFold(i)) } : {},
    );
    curve.push(measure(data, trainRows, calibrationRows, openRows, probabilities, calibration, options, seedMatch));
    progress();
    const labels = trainRows.length + calibrationRows.length;
    if (labels >= budget) break;
    const size = Math.min(options.batch, budget - labels);
    if (desk === null) {
      // Baseline: the same random share calibrates; the rest trains, drawn uniformly too.
      const exact = size * options.randomShare;
      let nCal = Math.floor(exact);
      if (rng.next() < exact - nCal) nCal++;
      const drawn = shuffleInPlace(openRows, rng).slice(0, size);
      drawn.forEach((i, j) => (j < nCal ? calibrationRows : trainRows).push(i));
      drawn.forEach((i) => labelled.add(i));
    } else {
      // The desk between two versions: `size` leases under this version's priorities.
      for (const pick of desk.serve(openRows, probabilities, calibration, size)) {
        (pick.draw === 'random' ? calibrationRows : trainRows).push(pick.row);
        labelled.add(pick.row);
      }
    }
  }
  return curve;
}

/**
 * A desk with one reviewer, served by the sampling policy as the lease
 * service serves it: per lease one uniform number chooses the draw, its
 * sources are tried in order, the uncertainty order is fixed per version
 * (as the service stores priorities when it publishes), and a near-duplicate
 * of the item served last is skipped among the top candidates. Random draws
 * calibrate; every other verdict trains (review-lane verdicts too).
 */
function simulatedDesk(
  data: RehearsalData,
  options: RehearsalOptions,
  strategy: SamplingStrategy,
  rng: Rng,
): {
  serve: (
    open: readonly number[],
    probabilities: ReadonlyMap<number, Float64Array>,
    calibration: ConformalCalibration,
    size: number,
  ) => Array<{ row: number; draw: string }>;
} {
  const watched = watchedOf(data, options);
  const shares = { randomShare: options.randomShare, screenShare: options.screenShare ?? 0 };
  const setOptions = setOptionsOf(data, options);
  // The desk's random keys, given once to every pool item independently of its content (as at import).
  const randKey = new Map(data.pool.map((i) => [i, rng.next()]));
  let previous: number | null = null;
  return {
    serve(open, probabilities, calibration, size) {
      const setOf = (i: number): number[] => predictionSet(probabilities.get(i)!, calibration, setOptions).categories;
      const ranked = open
        .map((i) => ({
          id: i,
          priority: priorityOf(probabilities.get(i)!, strategy, strategy === 'set-size' ? setOf(i).length : 0),
        }))
        .sort(byPriority);
      const lane: Array<{ id: number; priority: number }> = [];
      if (watched.length > 0)
        for (const i of open) {
          const priority = screenPriority(probabilities.get(i)!, setOf(i), watched);
          if (priority !== null) lane.push({ id: i, priority });
        }
      lane.sort(byPriority);
      const taken = new Set<number>();
      const firstFree = (order: Array<{ id: number }>, count: number): number[] => {
        const out: number[] = [];
        for (const { id } of order) {
          if (out.length >= count) break;
          if (!taken.has(id)) out.push(id);
        }
        return out;
      };
      const from = (source: DrawSource, r: number): number | undefined => {
        switch (source) {
          case 'screen':
            return firstFree(lane, 1)[0];
          case 'uncertainty':
            return avoidNearDuplicate(
              firstFree(ranked, NEAR_DUPLICATE_CANDIDATES),
              (i) => data.vectors[i],
              previous === null ? null : data.vectors[previous],
            );
          case 'seed':
            return undefined;
          case 'uniform':
            return uniformPick(
              open.filter((i) => !taken.has(i)).map((i) => ({ id: i, randKey: randKey.get(i)! })),
              r,
            )?.id;
        }
      };
      const picks: Array<{ row: number; draw: string }> = [];
      while (picks.length < size && taken.size < open.length) {
        const kind = drawKindOf(rng.next(), shares, { hasModel: true, laneOpen: watched.length > 0 });
        const r = rng.next();
        for (const step of drawPlan(kind, false)) {
          const row = from(step.source, r);
          if (row === undefined) continue;
          taken.add(row);
          previous = row;
          picks.push({ row, draw: step.records });
          break;
        }
      }
      return picks;
    },
  };
}

/**
 * The cold start: `start` uniform random verdicts, continued (still uniform,
 * in the same order) until every category has at least one training verdict
 * or the budget is spent. A category without training examples gets
 * probability 0, so uncertainty sampling could never ask about it; the
 * service's cold start finds such examples through seed terms, which a
 * rehearsal file does not have. The pool is already in seeded random order,
 * so its head is a uniform sample, the same start set for every strategy.
 */
function coldStart(data: RehearsalData, start: number, budget: number): number[] {
  const rows = data.pool.slice(0, Math.min(start, budget));
  const seen = new Set(rows.map((i) => data.labels[i]));
  for (let j = rows.length; j < budget && seen.size < data.classes.length; j++) {
    const i = data.pool[j];
    rows.push(i);
    seen.add(data.labels[i]);
  }
  return rows;
}

function labelsToReach(curve: CurvePoint[], fullF1: number): RehearsalCurve['labelsToReach'] {
  const first = (share: number): number | null => curve.find((p) => p.macroF1 >= share * fullF1)?.labels ?? null;
  return { '0.95': first(0.95), '0.98': first(0.98) };
}

function curveSummary(curve: CurvePoint[], fullF1: number): RehearsalCurve {
  return {
    curve,
    labelsToReach: labelsToReach(curve, fullF1),
    randomVerdictsUntilInformative: curve.find((p) => p.setsInformative)?.calibrationLabels ?? null,
  };
}

/**
 * Reasons the rehearsal cannot answer what was asked of it, checked before
 * it runs: a budget larger than the pool, or too few random verdicts
 * expected for the target — with random share r and budget B the rarest
 * category (share π of the pool) gets about r·(B − start)·π calibration
 * verdicts, and a finite conformal threshold at 1 − α needs at least
 * ⌈1/α⌉ − 1 of them (per category, or in all for marginal calibration).
 */
export function rehearsalWarnings(data: RehearsalData, options: RehearsalOptions): string[] {
  const warnings: string[] = [];
  if (options.budget > data.pool.length)
    warnings.push(
      `the budget (${options.budget}) exceeds the pool (${data.pool.length} items after holding out the test set): the run stops at ${data.pool.length} verdicts`,
    );
  const budget = Math.min(options.budget, data.pool.length);
  const needed = calibrationSizeNeeded(0, 1 - options.target);
  const expected = options.randomShare * Math.max(0, budget - options.start);
  if (options.calibration === 'marginal') {
    if (expected < needed)
      warnings.push(
        `about ${Math.floor(expected)} random verdicts expected in the budget; coverage ${options.target} needs at least ${needed}: sets will hold every category throughout (raise --budget or --random-share, or lower --target)`,
      );
  } else {
    const counts = new Float64Array(data.classes.length);
    for (const i of data.pool) counts[data.labels[i]]++;
    data.classes.forEach((c, j) => {
      const perCategory = (expected * counts[j]) / data.pool.length;
      if (perCategory < needed)
        warnings.push(
          `category ${c} (${counts[j]} of ${data.pool.length} pool items) gets about ${Math.floor(perCategory)} random verdicts in the budget; per-category coverage ${options.target} needs at least ${needed}: its sets will always include it (raise --budget or --random-share, or lower --target)`,
        );
    });
  }
  const testCounts = new Float64Array(data.classes.length);
  for (const i of data.test) testCounts[data.labels[i]]++;
  data.classes.forEach((c, j) => {
    if (testCounts[j] < 30)
      warnings.push(
        `the hold-out set holds ${testCounts[j]} items of ${c}: its hold-out coverage is a rough estimate (fewer than 30 items)`,
      );
  });
  return warnings;
}

/**
 * Rehearses a desk on labelled data: after `start` uniform random verdicts
 * (the cold start: they train the first model, and it goes on until every
 * category has a training example, see {@link coldStart}), the desk is
 * simulated through the service's sampling policy (see `sampling-policy.ts`
 * and {@link simulatedDesk}): each lease a uniform draw with probability
 * `randomShare` (these calibrate and never train), the review lane with
 * probability `screenShare` when categories are watched, uncertainty
 * otherwise (these train), until `budget` verdicts. After every `batch`
 * verdicts the model is retrained (a new version), the calibration
 * recomputed and the test set measured.
 */
export function runRehearsal(data: RehearsalData, options: RehearsalOptions): RehearsalResult {
  checkOptions(options);
  watchedOf(data, options);
  const timing: Timing = { trainMs: [], scoreMs: [] };
  const perCurve = pointsOf(data, options);
  const transferred = options.startFrom === undefined ? null : transferOf(data, options.startFrom);
  const total =
    perCurve * (options.compareRandom ? 2 : 1) + (transferred === null ? 0 : pointsOf(data, options, true)) + 1;
  let done = 0;
  const progress = (): void => options.onProgress?.(++done, total);
  const curve = runCurve(data, options, options.strategy, createRng(options.seed * 31 + 7), timing, progress);
  const mainTiming = { trainMs: [...timing.trainMs], scoreMs: [...timing.scoreMs] };
  let random: RehearsalCurve | undefined;
  let randomCurve: CurvePoint[] | undefined;
  if (options.compareRandom)
    randomCurve = runCurve(data, options, 'random', createRng(options.seed * 31 + 8), timing, progress);
  const transferCurve =
    transferred === null
      ? null
      : runCurve(
          data,
          options,
          options.strategy,
          createRng(options.seed * 31 + 9),
          { trainMs: [], scoreMs: [] },
          progress,
          transferred.transfer,
        );
  const fullModel = train(data, data.pool, options, { trainMs: [], scoreMs: [] });
  const truth = data.test.map((i) => data.labels[i]);
  const predicted = data.test.map((i) => {
    const p = fullModel.predictProba(data.vectors[i]);
    let best = 0;
    for (let c = 1; c < p.length; c++) if (p[c] > p[best]) best = c;
    return best;
  });
  const k = data.classes.length;
  const full = { accuracy: accuracy(truth, predicted, k), macroF1: macroF1(truth, predicted, k) };
  progress();
  if (randomCurve) random = curveSummary(randomCurve, full.macroF1);
  const cold = curveSummary(curve, full.macroF1);
  let startFrom: TransferCurve | undefined;
  if (transferCurve !== null && options.startFrom !== undefined && transferred !== null) {
    const warm = curveSummary(transferCurve, full.macroF1);
    const saved = (share: '0.95' | '0.98'): number | null => {
      const without = cold.labelsToReach[share];
      const withStart = warm.labelsToReach[share];
      return without === null || withStart === null ? null : without - withStart;
    };
    const { deskId, deskName, version } = options.startFrom.json.source;
    startFrom = {
      ...warm,
      source: { deskId, deskName, version },
      untrained: transferred.untrained,
      dropped: transferred.dropped,
      verdictsSaved: { '0.95': saved('0.95'), '0.98': saved('0.98') },
    };
  }
  const mean = (xs: number[]): number => (xs.length ? xs.reduce((s, x) => s + x, 0) / xs.length : 0);
  return {
    classes: data.classes,
    pool: data.pool.length,
    test: data.test.length,
    target: options.target,
    seed: options.seed,
    calibration: options.calibration,
    c: 'c' in fullModel.training ? fullModel.training.c : (options.training?.c ?? DEFAULT_C),
    warnings: rehearsalWarnings(data, options),
    ...cold,
    ...(cold.curve.at(-1)?.screening ? { screening: cold.curve.at(-1)!.screening } : {}),
    full,
    ...(random ? { random } : {}),
    ...(startFrom ? { startFrom } : {}),
    timings: {
      featurizeMs: data.featurizeMs,
      trainMsMean: mean(mainTiming.trainMs),
      scoreMsMean: mean(mainTiming.scoreMs),
    },
  };
}

/**
 * `rehearse --tune`: picks C by k-fold cross-validation ({@link tuneC}) on
 * the labels a desk of this budget would have, the first `budget` items of
 * the seeded pool order (a uniform sample of the pool; the test set is not
 * touched).
 */
export function tuneRehearsalC(
  data: RehearsalData,
  options: Pick<RehearsalOptions, 'budget' | 'seed'> & { folds?: number; grid?: readonly number[] },
): TuneCResult {
  const rows = data.pool.slice(0, Math.min(options.budget, data.pool.length));
  return tuneC(
    rows.map((i) => data.vectors[i]),
    rows.map((i) => data.classes[data.labels[i]]),
    {
      categories: data.classes,
      hashBits: data.hashBits,
      seed: options.seed,
      ...(options.folds === undefined ? {} : { folds: options.folds }),
      ...(options.grid === undefined ? {} : { grid: options.grid }),
    },
  );
}

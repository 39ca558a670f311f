import LogisticRegression from 'ml-logistic-regression';
import { Matrix } from 'ml-matrix';
import { assertSparseVector, type SparseVector } from '../features/sparse-vector.js';
import { createRng } from '../random/rng.js';
import { LogisticModel } from './logistic-model.js';
import { SparseDesignMatrix } from './sparse-design-matrix.js';

/**
 * Default cap on training features. ml-logistic-regression transposes its
 * dense weight row into a column of single-element rows every step, which
 * costs about 0.15 µs a feature up to ~16 000 features and, from the
 * allocation pressure, 0.4–0.8 µs a feature beyond (measured on this
 * project's 2-core machine: 2.5 ms at 16 384, 26 ms at 65 536, ~100 ms at
 * 132 000). On SpamAssassin (2 000 training rows, 40 steps, 60/20/20 split,
 * seed 1) macro-F1 was 0.879 with 4 096 features, 0.897 with 16 384 and
 * 0.892 with 65 536, so the cap costs no accuracy there.
 */
export const DEFAULT_MAX_FEATURES = 16_384;

/**
 * Default step budget per class: 20·√(1000/n) clamped to 20…30. The step size
 * already scales as 1/λmax ∝ 1/n, so progress per step on the mean loss does
 * not shrink with n, while a step costs O(non-zeros + features); so large sets
 * get fewer steps. Measured on SpamAssassin (unbalanced, step scale 5, seed 1),
 * macro-F1 at n = 2 000 was 0.909 after 20 steps and 0.911 after 40, at
 * n = 500 0.889 and 0.891, at n = 100 0.69 and 0.70: beyond 20–30 steps the
 * gain is below the noise of a split.
 */
export function defaultMaxSteps(rows: number): number {
  return Math.min(30, Math.max(20, Math.round(20 * Math.sqrt(1000 / Math.max(rows, 1)))));
}

export interface TrainOptions {
  /** Every category of the desk (2 or more, distinct); labels must be among them. */
  categories: readonly string[];
  /** log2 of the vectors' dimension (the featuriser's hashBits). */
  hashBits: number;
  /** Upper bound on gradient steps per class (default {@link defaultMaxSteps} of the row count). */
  maxSteps?: number;
  /** Steps per round between loss checks (default 10). */
  stepsPerRound?: number;
  /**
   * Stop when a round lowers the mean logistic loss (per row and class) by
   * less than this many nats (default 1e-3).
   */
  tolerance?: number;
  /** Step size as a multiple of 4/λmax(XᵀX) (default 5; see the measurement below). */
  stepScale?: number;
  /** Power iterations estimating λmax (default 6). */
  powerIterations?: number;
  /** Weigh each one-vs-rest problem's two sides equally (default true). */
  balanced?: boolean;
  /**
   * Most buckets kept for training, the most frequent in the training rows
   * (default {@link DEFAULT_MAX_FEATURES}).
   */
  maxFeatures?: number;
}

/**
 * The buckets with non-zero frequency, at most `limit` of them: the most
 * frequent, ties broken towards lower bucket numbers; ascending. O(buckets).
 */
function topBuckets(df: Uint32Array, limit: number): Int32Array {
  let maxDf = 0;
  let nonZero = 0;
  for (let b = 0; b < df.length; b++) {
    if (df[b] > maxDf) maxDf = df[b];
    if (df[b] !== 0) nonZero++;
  }
  let cut = 1;
  let spareAtCut = Number.POSITIVE_INFINITY;
  if (nonZero > limit) {
    const histogram = new Uint32Array(maxDf + 2);
    for (let b = 0; b < df.length; b++) histogram[df[b]]++;
    let above = 0;
    cut = maxDf;
    while (cut > 1 && above + histogram[cut] <= limit) above += histogram[cut--];
    spareAtCut = limit - above;
  }
  const out = new Int32Array(Math.min(nonZero, limit));
  let n = 0;
  for (let b = 0; b < df.length; b++) {
    const d = df[b];
    if (d > cut || (d === cut && spareAtCut-- > 0)) out[n++] = b;
  }
  return out.subarray(0, n);
}

/** Softplus log(1 + eˢ), computed without overflow. */
function softplus(s: number): number {
  return s > 0 ? s + Math.log1p(Math.exp(-s)) : Math.log1p(Math.exp(s));
}

/**
 * Largest eigenvalue of XᵀX over the feature columns (the intercept column,
 * orthogonal to the centred features, left out) by power iteration (von
 * Mises), from a fixed pseudo-random start. A handful of iterations suffice:
 * the estimate only sets a step size, and a round that raises the loss is
 * undone with the step halved.
 */
function largestEigenvalue(x: SparseDesignMatrix, skipColumn: number, iterations: number): number {
  let v: Float64Array = new Float64Array(x.columns);
  const rng = createRng(0x5eed);
  for (let j = 0; j < v.length; j++) v[j] = rng.next() - 0.5;
  v[skipColumn] = 0;
  let lambda = 0;
  for (let t = 0; t < iterations; t++) {
    const w = x.transposeTimes(x.times(v));
    w[skipColumn] = 0;
    let dot = 0;
    let norm = 0;
    for (let j = 0; j < w.length; j++) {
      dot += w[j] * v[j];
      norm += w[j] * w[j];
    }
    norm = Math.sqrt(norm);
    if (norm === 0) return 0;
    lambda = Math.max(lambda, dot);
    for (let j = 0; j < w.length; j++) w[j] /= norm;
    v = w;
  }
  return lambda;
}

/**
 * Trains one-vs-rest logistic regression with ml-logistic-regression
 * (unregularised full-batch gradient ascent on the log-likelihood; Cox 1958
 * for the model), made practical for hashed text features:
 *
 * - the design matrix is sparse ({@link SparseDesignMatrix}), so a step costs
 *   O(non-zeros); the hashed buckets that occur in the training rows are first
 *   compacted to 0…m−1 (a bucket no training row has keeps weight 0 anyway),
 *   since the library copies its dense weight row every step;
 * - an intercept column (value `interceptScale`) is appended;
 * - categories are mapped to 0…k−1 over those with examples; the others get
 *   probability 0;
 * - the library sums the gradient over rows, so the step size must shrink as
 *   rows grow: it is `stepScale · 4/λmax(XᵀX)` (the gradient of the summed
 *   logistic loss is λmax/4-Lipschitz), estimated by power iteration;
 * - the feature columns are centred implicitly (see
 *   {@link SparseDesignMatrix.centreColumns}), which removes the large
 *   eigenvalue of the mean direction: on SpamAssassin the step grew ~30× and
 *   20 steps did what 400 uncentred steps had not;
 * - training runs in rounds of `stepsPerRound` library steps, each round
 *   continuing from the last (warm start through base scores), and stops
 *   when a round improves the mean loss by less than `tolerance`, or after
 *   `maxSteps`; a round that raises the loss is undone and the step halved. Unregularised logistic regression on separable data has no
 *   finite optimum, so this early stop is also what keeps the weights finite.
 *
 * Deterministic: full-batch gradient ascent from zero weights uses no random
 * numbers, so the same rows give the same model.
 *
 * @param vectors  one sparse vector per training row (indices < 2^hashBits)
 * @param labels   the category of each row
 * @throws RangeError / TypeError on bad shapes, unknown labels or options.
 */
export function trainLogisticModel(
  vectors: readonly SparseVector[],
  labels: readonly string[],
  options: TrainOptions,
): LogisticModel {
  const { categories, hashBits } = options;
  const maxSteps = options.maxSteps ?? defaultMaxSteps(vectors.length);
  const stepsPerRound = options.stepsPerRound ?? 10;
  const tolerance = options.tolerance ?? 1e-3;
  const stepScale = options.stepScale ?? 5;
  const powerIterations = options.powerIterations ?? 6;
  const balanced = options.balanced ?? true;
  const maxFeatures = options.maxFeatures ?? DEFAULT_MAX_FEATURES;
  if (!Array.isArray(categories) || categories.length < 2 || new Set(categories).size !== categories.length) {
    throw new RangeError(`categories must list at least 2 distinct names, got ${JSON.stringify(categories)}`);
  }
  if (!Number.isInteger(hashBits) || hashBits < 1 || hashBits > 26)
    throw new RangeError(`hashBits must be an integer in 1…26, got ${hashBits}`);
  if (!Number.isInteger(maxSteps) || maxSteps < 1)
    throw new RangeError(`maxSteps must be a positive integer, got ${maxSteps}`);
  if (!Number.isInteger(stepsPerRound) || stepsPerRound < 1)
    throw new RangeError(`stepsPerRound must be a positive integer, got ${stepsPerRound}`);
  if (!(tolerance >= 0)) throw new RangeError(`tolerance must be ≥ 0, got ${tolerance}`);
  if (!(stepScale > 0)) throw new RangeError(`stepScale must be > 0, got ${stepScale}`);
  if (!Number.isInteger(maxFeatures) || maxFeatures < 1)
    throw new RangeError(`maxFeatures must be a positive integer, got ${maxFeatures}`);
  if (vectors.length !== labels.length) {
    throw new RangeError(`vectors (${vectors.length}) and labels (${labels.length}) differ in length`);
  }
  if (vectors.length === 0) throw new RangeError('vectors must hold at least one training row');
  const dimension = 2 ** hashBits;
  const position = new Map(categories.map((c, i) => [c, i]));
  const rowCategory = new Int32Array(labels.length);
  const present = new Set<number>();
  labels.forEach((label, i) => {
    const p = position.get(label);
    if (p === undefined) throw new RangeError(`labels[${i}] = ${JSON.stringify(label)} is not one of the categories`);
    rowCategory[i] = p;
    present.add(p);
  });
  const trained = [...present].sort((a, b) => a - b);
  const classOf = new Map(trained.map((p, c) => [p, c]));
  const k = trained.length;

  // Compact the buckets used by the training rows to 0…m−1, keeping the
  // `maxFeatures` most frequent (by training document frequency).
  const df = new Uint32Array(dimension);
  vectors.forEach((v, i) => {
    assertSparseVector(v, `vectors[${i}]`, dimension);
    for (let t = 0; t < v.indices.length; t++) df[v.indices[t]]++;
  });
  const used = topBuckets(df, maxFeatures);
  const m = used.length;
  const features = used;
  const compact = new Int32Array(dimension);
  for (let j = 0; j < m; j++) compact[features[j]] = j + 1;
  let nnz = 0;
  for (const v of vectors) for (let t = 0; t < v.indices.length; t++) if (compact[v.indices[t]] !== 0) nnz++;

  const rows = vectors.length;
  const rowPtr = new Int32Array(rows + 1);
  const colIdx = new Int32Array(nnz + rows);
  const values = new Float64Array(nnz + rows);
  let p = 0;
  for (let i = 0; i < rows; i++) {
    const v = vectors[i];
    for (let t = 0; t < v.indices.length; t++) {
      const j = compact[v.indices[t]];
      if (j === 0) continue;
      colIdx[p] = j - 1;
      values[p++] = v.values[t];
    }
    colIdx[p] = m;
    values[p++] = 1;
    rowPtr[i + 1] = p;
  }
  const columns = m + 1;

  if (k === 1) {
    return new LogisticModel(
      categories,
      trained,
      hashBits,
      new Int32Array(0),
      new Float64Array(0),
      new Float64Array(1),
      {
        rows,
        steps: 0,
        loss: 0,
        learningRate: 0,
        converged: true,
      },
    );
  }

  const x = new SparseDesignMatrix(rowPtr, colIdx, values, columns);
  const localLabels = Array.from(rowCategory, (cat) => classOf.get(cat)!);
  const y = Matrix.columnVector(localLabels);
  // One-vs-rest target of class c, as the library builds it: 0 for c, 1 for the rest.
  const targets = Array.from({ length: k }, (_, c) => Float64Array.from(localLabels, (l) => (l === c ? 0 : 1)));
  // Balanced one-vs-rest: in class c's problem the rows of c and the rest each
  // carry half the total weight (weights n/(2·n_c) and n/(2·(n − n_c)), mean 1;
  // King & Zeng 2001 on rare events, scikit-learn's class_weight="balanced"
  // per binary problem). Without it a rare category's probability stays near 0
  // everywhere, so uncertainty sampling never asks about it.
  const classCounts = new Float64Array(k);
  for (const l of localLabels) classCounts[l]++;
  const rowWeights = balanced
    ? targets.map((t, c) => {
        const wPos = rows / (2 * classCounts[c]);
        const wNeg = rows / (2 * (rows - classCounts[c]));
        return Float64Array.from(t, (v) => (v === 0 ? wPos : wNeg));
      })
    : null;
  const lossOf = (scores: Float64Array[]): number => {
    let total = 0;
    for (let c = 0; c < k; c++) {
      const s = scores[c];
      const t = targets[c];
      const w = rowWeights?.[c];
      for (let i = 0; i < rows; i++) total += (softplus(s[i]) - t[i] * s[i]) * (w === undefined ? 1 : w[i]);
    }
    return total;
  };

  // Centre the feature columns (implicitly; the intercept column absorbs the
  // shift), which removes the large eigenvalue of the mean direction that
  // otherwise caps the step size, and give the intercept column the value
  // √(λ/n) so its curvature n·b² matches the features' λ.
  const means = x.columnMeans();
  means[m] = 0;
  x.centreColumns(means);
  const lambda = largestEigenvalue(x, m, powerIterations);
  const interceptValue = lambda > 0 ? Math.sqrt(lambda / rows) : 1;
  x.setStoredColumn(m, interceptValue);
  let learningRate = (stepScale * 4) / (lambda > 0 ? lambda : rows);
  const weights = Array.from({ length: k }, () => new Float64Array(columns));
  let bases: Float64Array[] = Array.from({ length: k }, () => new Float64Array(rows));
  let loss = lossOf(bases);
  let steps = 0;
  let converged = false;
  while (steps < maxSteps) {
    const numSteps = Math.min(stepsPerRound, maxSteps - steps);
    const library = new LogisticRegression({ numSteps, learningRate });
    x.beginRound(bases, numSteps, rowWeights);
    library.train(x, y);
    if (x.productCount !== k * numSteps || library.classifiers.length !== k) {
      throw new Error(
        `ml-logistic-regression made ${x.productCount} products for ${library.classifiers.length} classes; expected ${k * numSteps} for ${k}`,
      );
    }
    const candidate = weights.map((w, c) => {
      const delta = library.classifiers[c].weights!;
      const next = new Float64Array(columns);
      for (let j = 0; j < columns; j++) next[j] = w[j] + delta.get(0, j);
      return next;
    });
    const candidateBases = candidate.map((w) => x.times(w));
    const candidateLoss = lossOf(candidateBases);
    steps += numSteps;
    if (!(candidateLoss <= loss)) {
      // Overshot: undo the round and halve the step.
      learningRate /= 2;
      continue;
    }
    const improvement = (loss - candidateLoss) / (rows * k);
    for (let c = 0; c < k; c++) weights[c] = candidate[c];
    bases = candidateBases;
    loss = candidateLoss;
    if (improvement < tolerance) {
      converged = true;
      break;
    }
  }

  // Score of class c: (x − μ)·w + b·w_b = x·w + (b·w_b − μ·w).
  const flat = new Float64Array(m * k);
  const biases = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    const w = weights[c];
    let shift = 0;
    for (let j = 0; j < m; j++) {
      flat[j * k + c] = w[j];
      shift += means[j] * w[j];
    }
    biases[c] = interceptValue * w[m] - shift;
  }
  x.beginRound(null, 0);
  return new LogisticModel(categories, trained, hashBits, features, flat, biases, {
    rows,
    steps,
    loss,
    learningRate,
    converged,
  });
}

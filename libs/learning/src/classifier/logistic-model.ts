import type { StoredJson } from '../stored-json.js';
import { assertSparseVector, type SparseVector } from '../features/sparse-vector.js';

/** How a multinomial model was trained (for reports; not needed to score). */
export interface SoftmaxTrainingSummary {
  /** The solver (models trained before Newton-CG existed all say `l-bfgs`). */
  method: 'l-bfgs' | 'newton-cg';
  /** Training rows. */
  rows: number;
  /** Hashed buckets that occur in the training rows (the model's columns). */
  features: number;
  /** Inverse regularisation strength C of the objective (see trainLogisticModel). */
  c: number;
  /** Weight of each trained class's rows, in `trained` order. */
  classWeights: number[];
  /** Relative gradient tolerance: stop at ‖∇f‖₂ ≤ tolerance · ‖∇f(0)‖₂. */
  tolerance: number;
  /** Solver iterations (L-BFGS steps, or Newton steps of Newton-CG). */
  iterations: number;
  /** Newton-CG only: Hessian-vector products (conjugate-gradient iterations). */
  hessianProducts?: number;
  /** Objective-and-gradient evaluations (passes over the training rows). */
  evaluations: number;
  /** Final objective value f. */
  objective: number;
  /** ‖∇f‖₂ at the returned weights. */
  gradientNorm: number;
  /** ‖∇f‖₂ at zero weights, the scale of the tolerance. */
  gradientNormAtZero: number;
  /** True when the gradient tolerance was reached. */
  converged: boolean;
  /** True when training started from a previous model's weights. */
  warmStart: boolean;
  /** Present (true) when the weights were pulled towards a prior model's instead of zero (see trainLogisticModel). */
  prior?: boolean;
}

/**
 * How a one-vs-rest model of format version 1 was trained (gradient steps of
 * ml-logistic-regression; such models are no longer trained but still score).
 */
export interface OneVsRestTrainingSummary {
  rows: number;
  steps: number;
  loss: number;
  learningRate: number;
  converged: boolean;
}

export type TrainingSummary = SoftmaxTrainingSummary | OneVsRestTrainingSummary;

/**
 * How scores become probabilities: `softmax` (multinomial logistic
 * regression, format version 2) or `one-vs-rest` (format version 1).
 */
export type LogisticLink = 'softmax' | 'one-vs-rest';

/** Serialised form of a {@link LogisticModel}. */
export interface LogisticModelJson {
  type: 'cribra.logistic-model';
  /** 2: multinomial (softmax); 1: one-vs-rest with the library's "not c" scores. */
  version: 1 | 2;
  /** Every category of the desk, in its order. */
  categories: string[];
  /** Positions in `categories` of the categories that had training examples, ascending. */
  trained: number[];
  hashBits: number;
  /** Hashed buckets that carry weights, ascending. */
  features: number[];
  /** weights[c][j]: weight of class `trained[c]` on bucket `features[j]`. */
  weights: number[][];
  /** Constant term of each trained class's score. */
  biases: number[];
  training: TrainingSummary;
}

/** The newest format version written by {@link LogisticModel.toJSON} for a softmax model. */
export const LOGISTIC_MODEL_VERSION = 2;

/**
 * A trained logistic model over hashed sparse features, scored with one
 * sparse dot product per category.
 *
 * - `softmax` (what training now produces): s_c = b_c + w_c·x is the log-odds
 *   of class c up to a shared constant, and p_c = exp(s_c) / Σ_j exp(s_j), the
 *   multinomial logistic model (Bishop, Pattern Recognition and Machine
 *   Learning, 2006, §4.3.4, eq. 4.104).
 * - `one-vs-rest` (format version 1, still read so that stored versions keep
 *   scoring): ml-logistic-regression's class-c model gives σ(s_c) = P(not c | x),
 *   so q_c = σ(−s_c), normalised into p_c = q_c / Σ_j q_j as scikit-learn does
 *   for one-vs-rest logistic regression.
 *
 * Categories without training examples get probability 0.
 */
export class LogisticModel {
  private lookup: Int32Array | null = null;

  /**
   * @param categories  all categories
   * @param trained     positions (in `categories`) of the trained classes
   * @param features    hashed buckets, ascending
   * @param weights     feature-major: weights[j * k + c] for feature j, class c (k = trained.length)
   * @param biases      constant term of each trained class's score
   * @param link        how scores become probabilities (default softmax)
   */
  constructor(
    readonly categories: readonly string[],
    readonly trained: readonly number[],
    readonly hashBits: number,
    readonly features: Int32Array,
    readonly weights: Float64Array,
    readonly biases: Float64Array,
    readonly training: TrainingSummary,
    readonly link: LogisticLink = 'softmax',
  ) {
    const k = trained.length;
    if (k < 1) throw new RangeError('a model needs at least one trained category');
    if (weights.length !== features.length * k) {
      throw new RangeError(`weights has ${weights.length} entries, expected ${features.length} × ${k}`);
    }
    if (biases.length !== k) throw new RangeError(`biases has ${biases.length} entries, expected ${k}`);
  }

  /** Number of buckets the input vectors index into. */
  get dimension(): number {
    return 2 ** this.hashBits;
  }

  private positions(): Int32Array {
    if (this.lookup === null) {
      const lookup = new Int32Array(this.dimension);
      for (let j = 0; j < this.features.length; j++) lookup[this.features[j]] = j + 1;
      this.lookup = lookup;
    }
    return this.lookup;
  }

  /** Raw scores s_c, one per trained class (see the class comment for their meaning under each link). */
  scores(x: SparseVector): Float64Array {
    const k = this.trained.length;
    const s = new Float64Array(k);
    for (let c = 0; c < k; c++) s[c] = this.biases[c];
    const lookup = this.positions();
    const weights = this.weights;
    const { indices, values } = x;
    const n = indices.length;
    for (let i = 0; i < n; i++) {
      const index = indices[i];
      if (index < 0 || index >= lookup.length) {
        throw new RangeError(`x.indices[${i}] = ${index} is outside 0…${lookup.length - 1}`);
      }
      const p = lookup[index];
      if (p === 0) continue;
      const base = (p - 1) * k;
      const v = values[i];
      for (let c = 0; c < k; c++) s[c] += v * weights[base + c];
    }
    return s;
  }

  /** Probabilities over all categories (sum 1), see the class comment. */
  predictProba(x: SparseVector): Float64Array {
    const out = new Float64Array(this.categories.length);
    const k = this.trained.length;
    if (k === 1) {
      out[this.trained[0]] = 1;
      return out;
    }
    const s = this.scores(x);
    const q = new Float64Array(k);
    let total = 0;
    if (this.link === 'one-vs-rest') {
      for (let c = 0; c < k; c++) {
        q[c] = 1 / (1 + Math.exp(s[c]));
        total += q[c];
      }
    }
    if (this.link === 'softmax' || !(total > 0)) {
      // Softmax of s (or, when every one-vs-rest q_c underflowed, of −s, their limit).
      const sign = this.link === 'softmax' ? 1 : -1;
      let max = -Infinity;
      for (let c = 0; c < k; c++) max = Math.max(max, sign * s[c]);
      total = 0;
      for (let c = 0; c < k; c++) {
        q[c] = Math.exp(sign * s[c] - max);
        total += q[c];
      }
    }
    for (let c = 0; c < k; c++) out[this.trained[c]] = q[c] / total;
    return out;
  }

  /** The most probable category (ties: the first in category order). */
  predict(x: SparseVector): string {
    const p = this.predictProba(x);
    let best = 0;
    for (let c = 1; c < p.length; c++) if (p[c] > p[best]) best = c;
    return this.categories[best];
  }

  toJSON(): LogisticModelJson {
    const k = this.trained.length;
    const weights: number[][] = Array.from({ length: k }, () => new Array<number>(this.features.length));
    for (let j = 0; j < this.features.length; j++) {
      for (let c = 0; c < k; c++) weights[c][j] = this.weights[j * k + c];
    }
    return {
      type: 'cribra.logistic-model',
      version: this.link === 'softmax' ? 2 : 1,
      categories: [...this.categories],
      trained: [...this.trained],
      hashBits: this.hashBits,
      features: Array.from(this.features),
      weights,
      biases: Array.from(this.biases),
      training: { ...this.training },
    };
  }

  /**
   * Restores a model written by {@link LogisticModel.toJSON}: version 2
   * (softmax) or version 1 (one-vs-rest, written before the multinomial solver).
   */
  static fromJSON(json: StoredJson<LogisticModelJson>): LogisticModel {
    if (json?.type !== 'cribra.logistic-model') throw new TypeError(`not a logistic model: type ${String(json?.type)}`);
    if (json.version !== 1 && json.version !== 2)
      throw new RangeError(`unsupported logistic model version ${String(json.version)}`);
    const k = json.trained.length;
    const m = json.features.length;
    if (json.weights.length !== k) throw new RangeError(`weights has ${json.weights.length} classes, expected ${k}`);
    for (const t of json.trained) {
      if (!Number.isInteger(t) || t < 0 || t >= json.categories.length)
        throw new RangeError(`bad trained category position ${t}`);
    }
    const features = Int32Array.from(json.features);
    assertSparseVector({ indices: features, values: new Float64Array(m) }, 'features', 2 ** json.hashBits);
    const weights = new Float64Array(m * k);
    for (let c = 0; c < k; c++) {
      if (json.weights[c].length !== m)
        throw new RangeError(`weights[${c}] has ${json.weights[c].length} entries, expected ${m}`);
      for (let j = 0; j < m; j++) weights[j * k + c] = json.weights[c][j];
    }
    return new LogisticModel(
      json.categories,
      json.trained,
      json.hashBits,
      features,
      weights,
      Float64Array.from(json.biases),
      json.training,
      json.version === 2 ? 'softmax' : 'one-vs-rest',
    );
  }
}

import type { StoredJson } from '../stored-json.js';
import { assertSparseVector, type SparseVector } from '../features/sparse-vector.js';

/** How a model was trained (for reports; not needed to score). */
export interface TrainingSummary {
  /** Training rows. */
  rows: number;
  /** Gradient steps taken per one-vs-rest class. */
  steps: number;
  /** Final summed logistic loss over the one-vs-rest problems. */
  loss: number;
  /** Step size passed to ml-logistic-regression in the last round. */
  learningRate: number;
  /** True when training stopped because the loss stopped improving. */
  converged: boolean;
}

/** Serialised form of a {@link LogisticModel}. */
export interface LogisticModelJson {
  type: 'cribra.logistic-model';
  version: 1;
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

/**
 * A trained one-vs-rest logistic model, scored without ml-matrix (one sparse
 * dot product per category).
 *
 * ml-logistic-regression's class-c model gives σ(s_c) = P(not c | x) (its
 * one-vs-rest target is 0 for the class, 1 for the rest), so
 * q_c = 1 − σ(s_c) = σ(−s_c). The one-vs-rest outputs are normalised into
 * multinomial probabilities p_c = q_c / Σ_j q_j, as scikit-learn does for
 * one-vs-rest logistic regression; categories without training examples get
 * probability 0.
 */
export class LogisticModel {
  private lookup: Int32Array | null = null;

  /**
   * @param categories  all categories
   * @param trained     positions (in `categories`) of the trained classes
   * @param features    hashed buckets, ascending
   * @param weights     feature-major: weights[j * k + c] for feature j, class c (k = trained.length)
   * @param biases      constant term of each trained class's score
   */
  constructor(
    readonly categories: readonly string[],
    readonly trained: readonly number[],
    readonly hashBits: number,
    readonly features: Int32Array,
    readonly weights: Float64Array,
    readonly biases: Float64Array,
    readonly training: TrainingSummary,
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

  /** Raw one-vs-rest scores s_c (the library's logit of "not c"), one per trained class. */
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

  /**
   * Multinomial probabilities over all categories (sum 1): normalised
   * one-vs-rest outputs, see the class comment.
   */
  predictProba(x: SparseVector): Float64Array {
    const out = new Float64Array(this.categories.length);
    const k = this.trained.length;
    if (k === 1) {
      out[this.trained[0]] = 1;
      return out;
    }
    const s = this.scores(x);
    let total = 0;
    const q = new Float64Array(k);
    for (let c = 0; c < k; c++) {
      q[c] = 1 / (1 + Math.exp(s[c]));
      total += q[c];
    }
    if (!(total > 0)) {
      // Every q_c underflowed: fall back to the limit, a softmax of −s.
      let max = -Infinity;
      for (let c = 0; c < k; c++) max = Math.max(max, -s[c]);
      total = 0;
      for (let c = 0; c < k; c++) {
        q[c] = Math.exp(-s[c] - max);
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
      version: 1,
      categories: [...this.categories],
      trained: [...this.trained],
      hashBits: this.hashBits,
      features: Array.from(this.features),
      weights,
      biases: Array.from(this.biases),
      training: { ...this.training },
    };
  }

  /** Restores a model written by {@link LogisticModel.toJSON}. */
  static fromJSON(json: StoredJson<LogisticModelJson>): LogisticModel {
    if (json?.type !== 'cribra.logistic-model') throw new TypeError(`not a logistic model: type ${String(json?.type)}`);
    if (json.version !== 1) throw new RangeError(`unsupported logistic model version ${String(json.version)}`);
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
    );
  }
}

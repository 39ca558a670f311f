import LogisticRegression from 'ml-logistic-regression';
import { Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import type { SparseVector } from '../features/sparse-vector.js';
import { createRng } from '../random/rng.js';
import { LogisticModel, type LogisticModelJson, type SoftmaxTrainingSummary } from './logistic-model.js';
import { trainLogisticModel, type TrainOptions } from './train-logistic.js';

const CATEGORIES = ['red', 'green', 'blue', 'unused'];

/** Three noisy clusters on disjoint feature blocks plus shared noise features. */
function toyData(n: number, seed: number): { x: SparseVector[]; y: string[] } {
  const rng = createRng(seed);
  const x: SparseVector[] = [];
  const y: string[] = [];
  for (let i = 0; i < n; i++) {
    const c = i % 3;
    const cols = new Set<number>();
    while (cols.size < 4) cols.add(c * 10 + Math.floor(rng.next() * 10));
    while (cols.size < 7) cols.add(30 + Math.floor(rng.next() * 30));
    const indices = Int32Array.from([...cols].sort((a, b) => a - b));
    const values = new Float64Array(indices.length).fill(1 / Math.sqrt(indices.length));
    x.push({ indices, values });
    y.push(CATEGORIES[c]);
  }
  return { x, y };
}

function dense(values: readonly number[]): SparseVector {
  const indices: number[] = [];
  const kept: number[] = [];
  values.forEach((v, i) => {
    if (v !== 0) {
      indices.push(i);
      kept.push(v);
    }
  });
  return { indices: Int32Array.from(indices), values: Float64Array.from(kept) };
}

const summaryOf = (m: LogisticModel) => m.training as SoftmaxTrainingSummary;

/**
 * The gradient of the objective f(W, b) = ½‖W‖² + C Σ ω_y (−log p_y), computed
 * here from the model's own probabilities (independently of the solver's
 * code): ∂f/∂w_c = W_c + C Σ_i ω_i (p_ic − [y_i = c]) x_i, ∂f/∂b_c = C Σ_i ω_i (p_ic − [y_i = c]).
 * Returns its Euclidean norm and the norm at zero weights (p = 1/k).
 */
function gradientNorms(
  model: LogisticModel,
  x: readonly SparseVector[],
  y: readonly string[],
  c: number,
  rowWeight: (label: string) => number,
): { norm: number; atZero: number } {
  const k = model.trained.length;
  const grad = new Map<string, number>();
  const gradZero = new Map<string, number>();
  const add = (m: Map<string, number>, key: string, v: number) => m.set(key, (m.get(key) ?? 0) + v);
  x.forEach((v, i) => {
    const p = model.predictProba(v);
    const w = c * rowWeight(y[i]);
    model.trained.forEach((cat, a) => {
      const target = model.categories[cat] === y[i] ? 1 : 0;
      const r = w * (p[cat] - target);
      const r0 = w * (1 / k - target);
      add(grad, `b${a}`, r);
      add(gradZero, `b${a}`, r0);
      for (let t = 0; t < v.indices.length; t++) {
        add(grad, `${v.indices[t]}:${a}`, r * v.values[t]);
        add(gradZero, `${v.indices[t]}:${a}`, r0 * v.values[t]);
      }
    });
  });
  model.features.forEach((bucket, j) => {
    for (let a = 0; a < k; a++) add(grad, `${bucket}:${a}`, model.weights[j * k + a]);
  });
  const norm = (m: Map<string, number>) => Math.sqrt([...m.values()].reduce((s, g) => s + g * g, 0));
  return { norm: norm(grad), atZero: norm(gradZero) };
}

describe('trainLogisticModel (L2-regularised multinomial logistic regression by L-BFGS)', () => {
  const train = toyData(150, 1);
  const test = toyData(60, 2);
  const options: TrainOptions = { categories: CATEGORIES, hashBits: 8 };
  const model = trainLogisticModel(train.x, train.y, options);

  it('learns separable clusters and gives probabilities that sum to 1', () => {
    const correct = test.x.filter((v, i) => model.predict(v) === test.y[i]).length;
    expect(correct / test.x.length).toBeGreaterThan(0.95);
    for (const v of test.x) {
      const p = model.predictProba(v);
      expect(p.length).toBe(4);
      expect(Math.abs(p.reduce((s, q) => s + q, 0) - 1)).toBeLessThan(1e-12);
      // A category with no training examples gets probability 0.
      expect(p[3]).toBe(0);
    }
    expect(model.trained).toEqual([0, 1, 2]);
    expect(model.link).toBe('softmax');
    expect(summaryOf(model)).toMatchObject({ method: 'l-bfgs', converged: true, warmStart: false, rows: 150 });
    // Only the buckets that occur become columns: 0…59 here.
    expect(model.features.length).toBe(60);
  });

  it('satisfies the first-order conditions: the gradient norm is below the tolerance', () => {
    for (const [c, tolerance] of [
      [1, 1e-6],
      [10, 1e-8],
    ] as const) {
      const m = trainLogisticModel(train.x, train.y, { ...options, c, tolerance, classWeight: 'none' });
      const { norm, atZero } = gradientNorms(m, train.x, train.y, c, () => 1);
      expect(summaryOf(m).converged).toBe(true);
      expect(atZero).toBeCloseTo(summaryOf(m).gradientNormAtZero, 9);
      expect(norm).toBeLessThanOrEqual(tolerance * atZero * (1 + 1e-6));
      expect(norm).toBeCloseTo(summaryOf(m).gradientNorm, 9);
    }
  });

  it('solves a regularised, separable 2-D case derived by hand', () => {
    // Points (1, 0) and (0, 1) are "b", (−1, 0) and (0, −1) are "a". The set is symmetric under x ↦ −x with the
    // labels swapped, so b_a = b_b = 0; at the optimum Σ_c w_c = 0 (the loss gradients of the classes sum to 0,
    // leaving ∂f/∂Σw = Σw), so w_b = −w_a = (u, u). Each point then has log-odds 2u for its own class and
    //   f(u) = 2u² + 4C·log(1 + e^(−2u)),  f'(u) = 4u − 8C·σ(−2u) = 0  ⇔  δ = 4C·σ(−δ) with δ = 2u.
    // δ is found by bisection (the right side falls, the left rises).
    const x = [dense([1, 0]), dense([0, 1]), dense([-1, 0]), dense([0, -1])];
    const y = ['b', 'b', 'a', 'a'];
    for (const c of [0.5, 1, 4]) {
      let lo = 0;
      let hi = 4 * c;
      for (let i = 0; i < 200; i++) {
        const mid = (lo + hi) / 2;
        if (mid < (4 * c) / (1 + Math.exp(mid))) lo = mid;
        else hi = mid;
      }
      const delta = (lo + hi) / 2;
      const m = trainLogisticModel(x, y, { categories: ['a', 'b'], hashBits: 2, c, tolerance: 1e-12 });
      for (let j = 0; j < 2; j++) {
        expect(m.weights[j * 2]).toBeCloseTo(-delta / 2, 9);
        expect(m.weights[j * 2 + 1]).toBeCloseTo(delta / 2, 9);
      }
      expect(Math.abs(m.biases[0])).toBeLessThan(1e-9);
      expect(Math.abs(m.biases[1])).toBeLessThan(1e-9);
      expect(m.predictProba(x[0])[1]).toBeCloseTo(1 / (1 + Math.exp(-delta)), 9);
    }
  });

  it('reproduces a published worked example: hours of study against passing an exam', () => {
    // The "probability of passing an exam versus hours of study" example of the English Wikipedia article
    // "Logistic regression" (20 students; maximum-likelihood fit intercept −4.0777, hours 1.5046). Data and
    // coefficients recalled from memory, then checked against scikit-learn 1.2 (penalty=None), which gives
    // −4.07772 and 1.50465. A very large C makes the regularisation negligible.
    const hours = [0.5, 0.75, 1, 1.25, 1.5, 1.75, 1.75, 2, 2.25, 2.5, 2.75, 3, 3.25, 3.5, 4, 4.25, 4.5, 4.75, 5, 5.5];
    const pass = [0, 0, 0, 0, 0, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 1, 1, 1, 1, 1];
    const m = trainLogisticModel(
      hours.map((h) => dense([h])),
      pass.map((p) => (p === 1 ? 'pass' : 'fail')),
      { categories: ['fail', 'pass'], hashBits: 1, c: 1e7, classWeight: 'none', tolerance: 1e-12 },
    );
    // Binary softmax: the log-odds of "pass" is (w_pass − w_fail)·x + (b_pass − b_fail).
    expect(m.weights[1] - m.weights[0]).toBeCloseTo(1.5046, 3);
    expect(m.biases[1] - m.biases[0]).toBeCloseTo(-4.0777, 3);
  });

  it('agrees with ml-logistic-regression trained to convergence on small dense binary problems', () => {
    // Unregularised binary logistic regression has one optimum on overlapping classes; ml-logistic-regression
    // reaches it by plain gradient ascent with enough steps (its intercept is a constant column here), ours with
    // a negligible penalty (C = 1e7). Probabilities must agree within 1e-3.
    for (const seed of [1, 2, 3]) {
      const rng = createRng(seed);
      const rows: number[][] = [];
      const labels: number[] = [];
      for (let i = 0; i < 40; i++) {
        const label = i % 2;
        const a = rng.next() * 2 - 1 + (label === 1 ? 0.6 : 0);
        const b = rng.next() * 2 - 1 - (label === 1 ? 0.3 : 0);
        rows.push([a, b]);
        labels.push(label);
      }
      const reference = new LogisticRegression({ numSteps: 20000, learningRate: 0.05 });
      reference.train(new Matrix(rows.map((r) => [...r, 1])), Matrix.columnVector(labels));
      const ours = trainLogisticModel(
        rows.map((r) => dense(r)),
        labels.map((l) => (l === 1 ? 'one' : 'zero')),
        { categories: ['zero', 'one'], hashBits: 1, c: 1e7, classWeight: 'none', tolerance: 1e-10 },
      );
      const w = reference.classifiers[0].weights!;
      rows.forEach((r) => {
        // The library's first one-vs-rest model targets 0 for label 0 and 1 for the rest: σ(score) = P(one).
        const pOne = 1 / (1 + Math.exp(-(w.get(0, 0) * r[0] + w.get(0, 1) * r[1] + w.get(0, 2))));
        expect(Math.abs(ours.predictProba(dense(r))[1] - pOne)).toBeLessThan(1e-3);
      });
    }
  });

  it('reaches the same optimum from a warm start, and after a few more rows in fewer iterations', () => {
    // Near the optimum L-BFGS first rebuilds its curvature pairs, so a warm start saves most at the default
    // tolerance, where a handful of iterations from a close start suffice.
    const tight = { ...options, tolerance: 1e-7 };
    const first = trainLogisticModel(train.x.slice(0, 120), train.y.slice(0, 120), tight);
    const cold = trainLogisticModel(train.x, train.y, tight);
    const warm = trainLogisticModel(train.x, train.y, { ...tight, warmStart: first });
    expect(summaryOf(warm).warmStart).toBe(true);
    expect(summaryOf(warm).converged).toBe(true);
    for (const v of test.x) {
      const a = cold.predictProba(v);
      const b = warm.predictProba(v);
      a.forEach((q, i) => expect(Math.abs(q - b[i])).toBeLessThan(1e-6));
    }
    const before = trainLogisticModel(train.x.slice(0, 140), train.y.slice(0, 140), options);
    const again = trainLogisticModel(train.x, train.y, { ...options, warmStart: before });
    expect(summaryOf(again).converged).toBe(true);
    expect(summaryOf(again).iterations).toBeLessThan(summaryOf(model).iterations);
    // A one-vs-rest model or another hash size cannot seed the weights: the training starts cold.
    const other = trainLogisticModel(train.x, train.y, { ...options, hashBits: 9 });
    expect(summaryOf(trainLogisticModel(train.x, train.y, { ...options, warmStart: other })).warmStart).toBe(false);
  });

  it('trains by trust-region Newton-CG (Lin, Weng & Keerthi 2008) to the first-order conditions, as L-BFGS does', () => {
    for (const [c, tolerance] of [
      [1, 1e-6],
      [10, 1e-8],
    ] as const) {
      const m = trainLogisticModel(train.x, train.y, {
        ...options,
        c,
        tolerance,
        classWeight: 'none',
        method: 'newton-cg',
      });
      const { norm, atZero } = gradientNorms(m, train.x, train.y, c, () => 1);
      expect(summaryOf(m)).toMatchObject({ method: 'newton-cg', converged: true, warmStart: false });
      expect(summaryOf(m).hessianProducts).toBeGreaterThan(0);
      expect(norm).toBeLessThanOrEqual(tolerance * atZero * (1 + 1e-6));
      // The objective is strictly convex in W with Σ_c b_c fixed at 0: both solvers reach the one optimum.
      const l = trainLogisticModel(train.x, train.y, { ...options, c, tolerance, classWeight: 'none' });
      for (const v of test.x) {
        const a = m.predictProba(v);
        const b = l.predictProba(v);
        a.forEach((q, i) => expect(Math.abs(q - b[i])).toBeLessThan(1e-5));
      }
    }
  });

  it('warm-starts by Newton-CG after a few more rows: the cold optimum in a Newton step or two, deterministically', () => {
    const before = trainLogisticModel(train.x.slice(0, 140), train.y.slice(0, 140), options);
    const warm = trainLogisticModel(train.x, train.y, { ...options, warmStart: before });
    const cold = trainLogisticModel(train.x, train.y, options);
    expect(summaryOf(warm)).toMatchObject({ method: 'newton-cg', converged: true, warmStart: true });
    expect(summaryOf(warm).iterations).toBeLessThanOrEqual(3);
    expect(summaryOf(warm).evaluations).toBeLessThan(summaryOf(cold).evaluations / 2);
    // Both stop at ‖∇f‖ ≤ 1e-3·‖∇f(0)‖, so they agree to about that accuracy, not to the last digit.
    for (const v of test.x) {
      const a = cold.predictProba(v);
      const b = warm.predictProba(v);
      a.forEach((q, i) => expect(Math.abs(q - b[i])).toBeLessThan(1e-2));
    }
    const again = trainLogisticModel(train.x, train.y, { ...options, warmStart: before });
    expect(Array.from(again.weights)).toEqual(Array.from(warm.weights));
    expect(Array.from(again.biases)).toEqual(Array.from(warm.biases));
    // L-BFGS can still be asked for from a warm start.
    expect(
      summaryOf(trainLogisticModel(train.x, train.y, { ...options, warmStart: before, method: 'l-bfgs' })).method,
    ).toBe('l-bfgs');
  });

  it('is deterministic and round-trips through JSON (format version 2) with the same scores', () => {
    const again = trainLogisticModel(train.x, train.y, options);
    expect(Array.from(again.weights)).toEqual(Array.from(model.weights));
    expect(Array.from(again.biases)).toEqual(Array.from(model.biases));
    const restored = LogisticModel.fromJSON(JSON.parse(JSON.stringify(model.toJSON())) as LogisticModelJson);
    for (const v of test.x) {
      const a = model.predictProba(v);
      const b = restored.predictProba(v);
      a.forEach((q, i) => expect(Math.abs(q - b[i])).toBeLessThan(1e-12));
    }
    expect(model.toJSON()).toMatchObject({ type: 'cribra.logistic-model', version: 2 });
    expect(() => LogisticModel.fromJSON({ ...model.toJSON(), version: 9 })).toThrow(/version/);
    expect(() => LogisticModel.fromJSON({ ...model.toJSON(), type: 'other' })).toThrow(/not a logistic model/);
  });

  it('still scores a stored one-vs-rest model of format version 1', () => {
    // Written by the earlier one-vs-rest trainer: score s_c is the log-odds of "not c", q_c = σ(−s_c), p ∝ q.
    const stored = {
      type: 'cribra.logistic-model',
      version: 1,
      categories: ['a', 'b', 'c'],
      trained: [0, 2],
      hashBits: 4,
      features: [3, 7],
      weights: [
        [1, -2],
        [-1, 0.5],
      ],
      biases: [0.25, -0.5],
      training: { rows: 10, steps: 20, loss: 3.2, learningRate: 0.1, converged: true },
    };
    const m = LogisticModel.fromJSON(stored);
    expect(m.link).toBe('one-vs-rest');
    const x = { indices: Int32Array.of(3, 7, 9), values: Float64Array.of(0.6, 0.8, 1) };
    const sA = 0.25 + 0.6 * 1 + 0.8 * -2;
    const sC = -0.5 + 0.6 * -1 + 0.8 * 0.5;
    const qA = 1 / (1 + Math.exp(sA));
    const qC = 1 / (1 + Math.exp(sC));
    const p = m.predictProba(x);
    expect(p[0]).toBeCloseTo(qA / (qA + qC), 12);
    expect(p[1]).toBe(0);
    expect(p[2]).toBeCloseTo(qC / (qA + qC), 12);
    expect(m.toJSON()).toEqual(stored);
  });

  it('handles a single trained category and two categories', () => {
    const one = trainLogisticModel(train.x.slice(0, 1), ['green'], options);
    expect(Array.from(one.predictProba(test.x[0]))).toEqual([0, 1, 0, 0]);
    const two = trainLogisticModel(train.x.slice(0, 2), train.y.slice(0, 2), options);
    expect(two.predict(train.x[0])).toBe('red');
    expect(two.predict(train.x[1])).toBe('green');
  });

  it('weighs the classes: balanced weights give a rare category its probability', () => {
    // Keep one red item in ten: red is rare.
    const keep = train.x.map((_, i) => train.y[i] !== 'red' || i % 30 === 0);
    const x = train.x.filter((_, i) => keep[i]);
    const y = train.y.filter((_, i) => keep[i]);
    const balanced = trainLogisticModel(x, y, options);
    const plain = trainLogisticModel(x, y, { ...options, classWeight: 'none' });
    const explicit = trainLogisticModel(x, y, { ...options, classWeight: { red: 5 } });
    expect(summaryOf(balanced).classWeights[0]).toBeCloseTo(x.length / (3 * 5), 12);
    expect(summaryOf(explicit).classWeights).toEqual([5, 1, 1]);
    const reds = test.x.filter((_, i) => test.y[i] === 'red');
    const meanRed = (m: LogisticModel) => reds.reduce((s, v) => s + m.predictProba(v)[0], 0) / reds.length;
    expect(meanRed(balanced)).toBeGreaterThan(meanRed(plain));
    expect(meanRed(explicit)).toBeGreaterThan(meanRed(plain));
  });

  it('regularises less with a larger C', () => {
    const norm = (m: LogisticModel) => Math.hypot(...m.weights);
    expect(norm(trainLogisticModel(train.x, train.y, { ...options, c: 10 }))).toBeGreaterThan(norm(model));
  });

  it('rejects bad input naming the argument', () => {
    expect(() => trainLogisticModel(train.x, train.y.slice(1), options)).toThrow(/differ in length/);
    expect(() => trainLogisticModel(train.x.slice(0, 1), ['purple'], options)).toThrow(/labels\[0\]/);
    expect(() =>
      trainLogisticModel([{ indices: Int32Array.of(999), values: Float64Array.of(1) }], ['red'], options),
    ).toThrow(/vectors\[0\]/);
    expect(() => trainLogisticModel(train.x, train.y, { ...options, categories: ['a'] })).toThrow(/categories/);
    expect(() => trainLogisticModel(train.x, train.y, { ...options, c: 0 })).toThrow(/\bc must/);
    expect(() => trainLogisticModel(train.x, train.y, { ...options, tolerance: -1 })).toThrow(/tolerance/);
    expect(() => trainLogisticModel(train.x, train.y, { ...options, classWeight: { purple: 2 } })).toThrow(
      /unknown category/,
    );
    expect(() => trainLogisticModel(train.x, train.y, { ...options, classWeight: { red: 0 } })).toThrow(/> 0/);
    expect(() => trainLogisticModel([], [], options)).toThrow(/at least one/);
  });
});

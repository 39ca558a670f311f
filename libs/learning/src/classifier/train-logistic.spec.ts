import { describe, expect, it } from 'vitest';
import type { SparseVector } from '../features/sparse-vector.js';
import { createRng } from '../random/rng.js';
import { LogisticModel } from './logistic-model.js';
import { trainLogisticModel } from './train-logistic.js';

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

describe('trainLogisticModel', () => {
  const train = toyData(150, 1);
  const test = toyData(60, 2);
  const model = trainLogisticModel(train.x, train.y, { categories: CATEGORIES, hashBits: 8 });

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
    expect(model.training.steps).toBeGreaterThan(0);
  });

  it('is deterministic and round-trips through JSON with the same scores', () => {
    const again = trainLogisticModel(train.x, train.y, { categories: CATEGORIES, hashBits: 8 });
    const restored = LogisticModel.fromJSON(JSON.parse(JSON.stringify(model.toJSON())));
    for (const v of test.x) {
      expect(Array.from(again.predictProba(v))).toEqual(Array.from(model.predictProba(v)));
      const a = model.predictProba(v);
      const b = restored.predictProba(v);
      a.forEach((q, i) => expect(Math.abs(q - b[i])).toBeLessThan(1e-12));
    }
    expect(model.toJSON()).toMatchObject({ type: 'cribra.logistic-model', version: 1 });
    expect(() => LogisticModel.fromJSON({ ...model.toJSON(), version: 9 })).toThrow(/version/);
  });

  it('keeps the loss falling and stops early on easy data', () => {
    const short = trainLogisticModel(train.x, train.y, { categories: CATEGORIES, hashBits: 8, maxSteps: 10 });
    expect(model.training.loss).toBeLessThan(short.training.loss);
    const easy = trainLogisticModel(train.x, train.y, {
      categories: CATEGORIES,
      hashBits: 8,
      maxSteps: 5000,
      tolerance: 1e-2,
    });
    expect(easy.training.converged).toBe(true);
    expect(easy.training.steps).toBeLessThan(5000);
  });

  it('handles a single trained category and two categories', () => {
    const one = trainLogisticModel(train.x.slice(0, 1), ['green'], { categories: CATEGORIES, hashBits: 8 });
    expect(Array.from(one.predictProba(test.x[0]))).toEqual([0, 1, 0, 0]);
    const two = trainLogisticModel(train.x.slice(0, 2), train.y.slice(0, 2), { categories: CATEGORIES, hashBits: 8 });
    expect(two.predict(train.x[0])).toBe('red');
    expect(two.predict(train.x[1])).toBe('green');
  });

  it('balances each one-vs-rest problem so a rare category gets its probability', () => {
    // Keep one red item in ten: red is rare.
    const keep = train.x.map((_, i) => train.y[i] !== 'red' || i % 30 === 0);
    const x = train.x.filter((_, i) => keep[i]);
    const y = train.y.filter((_, i) => keep[i]);
    const opts = { categories: CATEGORIES, hashBits: 8, maxSteps: 20 };
    const balanced = trainLogisticModel(x, y, opts);
    const plain = trainLogisticModel(x, y, { ...opts, balanced: false });
    const reds = test.x.filter((_, i) => test.y[i] === 'red');
    const meanRed = (m: LogisticModel) => reds.reduce((s, v) => s + m.predictProba(v)[0], 0) / reds.length;
    expect(meanRed(balanced)).toBeGreaterThan(meanRed(plain));
  });

  it('caps the features at the most frequent ones', () => {
    const capped = trainLogisticModel(train.x, train.y, { categories: CATEGORIES, hashBits: 8, maxFeatures: 20 });
    expect(capped.features.length).toBe(20);
  });

  it('rejects bad input naming the argument', () => {
    const opts = { categories: CATEGORIES, hashBits: 8 };
    expect(() => trainLogisticModel(train.x, train.y.slice(1), opts)).toThrow(/differ in length/);
    expect(() => trainLogisticModel(train.x.slice(0, 1), ['purple'], opts)).toThrow(/labels\[0\]/);
    expect(() =>
      trainLogisticModel([{ indices: Int32Array.of(999), values: Float64Array.of(1) }], ['red'], opts),
    ).toThrow(/vectors\[0\]/);
    expect(() => trainLogisticModel(train.x, train.y, { ...opts, categories: ['a'] })).toThrow(/categories/);
    expect(() => trainLogisticModel(train.x, train.y, { ...opts, maxSteps: 0 })).toThrow(/maxSteps/);
  });
});

import { describe, expect, it } from 'vitest';
import { createFeaturizer } from '../features/hashed-featurizer.js';
import { IdfTable } from '../features/idf-table.js';
import type { SparseVector } from '../features/sparse-vector.js';
import { tfidf } from '../features/tfidf.js';
import { createRng } from '../random/rng.js';
import type { SoftmaxTrainingSummary } from './logistic-model.js';
import { modelExport, readModelExport, remapCategories, sameFeaturizer } from './model-export.js';
import { trainLogisticModel } from './train-logistic.js';

const CATEGORIES = ['red', 'green', 'blue'];

/** Three noisy clusters on disjoint feature blocks plus shared noise features (64 buckets: hashBits 6). */
function toyData(n: number, seed: number): { x: SparseVector[]; y: string[] } {
  const rng = createRng(seed);
  const x: SparseVector[] = [];
  const y: string[] = [];
  for (let i = 0; i < n; i++) {
    const c = i % 3;
    const cols = new Set<number>();
    while (cols.size < 3) cols.add(c * 10 + Math.floor(rng.next() * 10));
    while (cols.size < 6) cols.add(30 + Math.floor(rng.next() * 30));
    const indices = Int32Array.from([...cols].sort((a, b) => a - b));
    const values = new Float64Array(indices.length).fill(1 / Math.sqrt(indices.length));
    x.push({ indices, values });
    y.push(CATEGORIES[c]);
  }
  return { x, y };
}

const base = { categories: CATEGORIES, hashBits: 6, classWeight: 'none' as const, tolerance: 1e-10 };

describe('training with a prior (MAP adaptation)', () => {
  const source = toyData(300, 1);
  const prior = trainLogisticModel(source.x, source.y, base);
  // A handful of rows that touch only some buckets.
  const few = toyData(6, 2);

  it('reaches the optimum of ½‖W − W₀‖² + C·Σ loss: the gradient, computed here from the probabilities, vanishes', () => {
    const c = 0.7;
    const model = trainLogisticModel(few.x, few.y, { ...base, c, prior });
    expect((model.training as SoftmaxTrainingSummary).prior).toBe(true);
    const k = model.trained.length;
    const w = (m: typeof model, bucket: number, a: number): number => {
      const j = Array.from(m.features).indexOf(bucket);
      return j < 0 ? 0 : m.weights[j * m.trained.length + a];
    };
    let worst = 0;
    for (const bucket of model.features) {
      for (let a = 0; a < k; a++) {
        let g = w(model, bucket, a) - w(prior, bucket, a);
        few.x.forEach((x, i) => {
          const at = Array.from(x.indices).indexOf(bucket);
          if (at < 0) return;
          const p = model.predictProba(x)[model.trained[a]];
          g += c * x.values[at] * (p - (few.y[i] === CATEGORIES[model.trained[a]] ? 1 : 0));
        });
        worst = Math.max(worst, Math.abs(g));
      }
    }
    // Tolerance: the solver stops at ‖∇f‖ ≤ 1e-10·‖∇f(0)‖; 1e-6 leaves room for rounding.
    expect(worst).toBeLessThan(1e-6);
  });

  it('keeps the prior’s weights on buckets no training row has, and stays near the prior when C is tiny', () => {
    const model = trainLogisticModel(few.x, few.y, { ...base, prior });
    const seen = new Set(few.x.flatMap((x) => Array.from(x.indices)));
    const k = model.trained.length;
    let checked = 0;
    prior.features.forEach((bucket, o) => {
      if (seen.has(bucket)) return;
      const j = Array.from(model.features).indexOf(bucket);
      for (let a = 0; a < k; a++) expect(model.weights[j * k + a]).toBe(prior.weights[o * k + a]);
      checked++;
    });
    expect(checked).toBeGreaterThan(0);
    const tiny = trainLogisticModel(few.x, few.y, { ...base, c: 1e-6, prior });
    const cold = trainLogisticModel(few.x, few.y, base);
    // Weights only: the intercepts are not penalised, so they follow the six rows whatever C is.
    const gap = (m: typeof prior): number => {
      let worst = 0;
      prior.features.forEach((bucket, o) => {
        const j = Array.from(m.features).indexOf(bucket);
        for (let a = 0; a < k; a++)
          worst = Math.max(worst, Math.abs((j < 0 ? 0 : m.weights[j * k + a]) - prior.weights[o * k + a]));
      });
      return worst;
    };
    // Tolerance 1e-4: with C = 1e-6 the six rows move a weight by about C times their loss gradient.
    expect(gap(tiny)).toBeLessThan(1e-4);
    // Without the prior the six rows alone give weights far from it.
    expect(gap(cold)).toBeGreaterThan(0.1);
  });
});

describe('model files', () => {
  const featurizer = createFeaturizer({ hashBits: 12 });
  const texts = [
    ['the storm brings rain and wind', 'weather'],
    ['sunny and mild all week', 'weather'],
    ['the team scored a late goal', 'sport'],
    ['the coach praised the referee', 'sport'],
    ['bake the bread with garlic', 'food'],
    ['a spicy soup for dinner', 'food'],
  ] as const;
  const idf = IdfTable.create(12);
  const counts = texts.map(([t]) => featurizer.counts(t));
  for (const c of counts) idf.addDocument(c);
  const vectors = counts.map((c) => tfidf(c, idf));
  const classifier = trainLogisticModel(
    vectors,
    texts.map(([, l]) => l),
    { categories: ['weather', 'sport', 'food'], hashBits: 12 },
  );
  const file = modelExport(
    { deskId: 4, deskName: 'Reading room', version: 2, publishedAt: null },
    classifier,
    idf,
    featurizer.options,
  );

  it('round-trips through JSON and scores the same', () => {
    const back = readModelExport(JSON.parse(JSON.stringify(file)));
    expect(back.featurizer).toEqual({ hashBits: 12, maxWordNgram: 2, charNgrams: [3, 5] });
    const f = createFeaturizer(back.featurizer);
    for (const [text] of texts) {
      const again = back.classifier.predictProba(tfidf(f.counts(text), back.idf));
      const here = classifier.predictProba(tfidf(featurizer.counts(text), idf));
      expect(Array.from(again)).toEqual(Array.from(here));
    }
  });

  it('refuses another type, another format version and inconsistent sizes, naming them', () => {
    expect(() => readModelExport({ ...file, type: 'something' })).toThrow(/not a model file/);
    expect(() => readModelExport({ ...file, version: 2 })).toThrow(/format version 2 is not supported/);
    expect(() => readModelExport({ ...file, featurizer: { ...file.featurizer, hashBits: 14 } })).toThrow(
      /hash sizes differ/,
    );
    expect(() => readModelExport([])).toThrow(TypeError);
  });

  it('maps categories by name: reordered, one new (untrained, probability 0), one dropped', () => {
    const { model, untrained, dropped } = remapCategories(classifier, ['food', 'threat', 'weather']);
    expect(untrained).toEqual(['threat']);
    expect(dropped).toEqual(['sport']);
    const x = vectors[4];
    const before = classifier.predictProba(x);
    const after = model.predictProba(x);
    expect(after[1]).toBe(0);
    // Without sport the softmax renormalises over food and weather: their ratio is unchanged (tolerance 1e-12).
    expect(after[0] / after[2]).toBeCloseTo(before[2] / before[0], 12);
    expect(() => remapCategories(classifier, ['food', 'threat'])).toThrow(/share 1 trained category/);
  });

  it('tells featuriser settings apart, defaults filled in', () => {
    expect(sameFeaturizer({ hashBits: 18 }, {})).toBe(true);
    expect(sameFeaturizer({ hashBits: 18 }, { hashBits: 18, charNgrams: null })).toBe(false);
  });
});

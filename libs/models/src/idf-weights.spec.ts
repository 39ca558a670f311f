import { describe, expect, it } from 'vitest';
import { createFeaturizer, IdfTable, tfidf } from '#learning';
import { IdfWeights } from './idf-weights.js';

describe('IdfWeights', () => {
  it('gives exactly the numbers of tfidf()', () => {
    const f = createFeaturizer({ hashBits: 14 });
    const texts = [
      'the bins were late again',
      'late late late: a broken lamp',
      'a lovely morning at the market',
      'again and again',
    ];
    const idf = IdfTable.create(14);
    for (const t of texts) idf.addDocument(f.counts(t));
    const w = new IdfWeights(idf);
    for (const t of [...texts, 'a text with words the pool never saw']) {
      const c = f.counts(t);
      const want = tfidf(c, idf);
      const got = w.weigh(c);
      expect(Array.from(got.indices)).toEqual(Array.from(want.indices));
      // Same expressions in the same order: equal to the last bit (tolerance 0).
      expect(Array.from(got.values)).toEqual(Array.from(want.values));
    }
  });

  it('checks the counts it is given', () => {
    const w = new IdfWeights(IdfTable.create(4));
    expect(() => w.weigh({ indices: Int32Array.from([16]), values: Float64Array.from([1]) })).toThrow(/outside/);
    expect(() => w.weigh({ indices: Int32Array.from([1]), values: Float64Array.from([-1]) })).toThrow(/non-negative/);
  });
});

import { describe, expect, it } from 'vitest';
import { murmur3String } from '../hashing/murmur3.js';
import { createFeaturizer } from './hashed-featurizer.js';

describe('createFeaturizer', () => {
  it('tokenises letters and digits of any script after NFKC and case folding', () => {
    const f = createFeaturizer();
    expect(f.tokens('Ｈｅｌｌｏ, WORLD! Straße 42 ﬁre — Привет мир; नमस्ते')).toEqual([
      'hello',
      'world',
      'strasse',
      '42',
      'fire',
      'привет',
      'мир',
      'नमस्ते',
    ]);
    // Han and Kana have no spaces between words: one token per character.
    expect(f.tokens('東京に行く')).toEqual(['東', '京', 'に', '行', 'く']);
  });

  it('counts word unigrams, bigrams and padded character n-grams', () => {
    const f = createFeaturizer({ hashBits: 20 });
    // "ab ab": unigrams ab×2; bigram "ab ab"×1; char n-grams of " ab ": " ab", "ab " (n=3)
    // and " ab " (n=4), each ×2; no 5-gram (the padded word has 4 characters).
    const c = f.counts('ab ab');
    const total = c.values.reduce((s, v) => s + v, 0);
    expect(total).toBe(2 + 1 + 6);
    expect(c.values.length).toBeLessThanOrEqual(5);
    for (let i = 1; i < c.indices.length; i++) expect(c.indices[i]).toBeGreaterThan(c.indices[i - 1]);
  });

  it('places a word in the bucket of its MurmurHash3 (unigram family)', () => {
    const f = createFeaturizer({ hashBits: 22, charNgrams: null, maxWordNgram: 1 });
    const c = f.counts('Zebra');
    expect(Array.from(c.indices)).toEqual([murmur3String('zebra', 0x2c9277b5) & ((1 << 22) - 1)]);
    expect(Array.from(c.values)).toEqual([1]);
  });

  it('gives the same features for equivalent texts and checks its options', () => {
    const f = createFeaturizer();
    expect(f.counts('ＣＡＦÉ')).toEqual(f.counts('café'));
    expect(f.counts('').indices.length).toBe(0);
    expect(() => createFeaturizer({ hashBits: 40 })).toThrow(/hashBits/);
    expect(() => createFeaturizer({ charNgrams: [5, 3] })).toThrow(/charNgrams/);
  });
});

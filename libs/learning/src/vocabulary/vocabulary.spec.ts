import { describe, expect, it } from 'vitest';
import { CooccurrenceCounter } from './cooccurrence-counter.js';
import { createPhraseJoiner } from './phrase-joiner.js';
import { ppmi } from './ppmi.js';
import { keepLargestPerRow, sparseMatrixFromDense, sparseMatrixToDense } from './sparse-matrix.js';
import { rankBySimilarity } from './term-similarity.js';
import { VocabularyCounter } from './vocabulary-counter.js';

describe('VocabularyCounter', () => {
  it('keeps the forced words first, then the most frequent, ties in code-unit order', () => {
    const counter = new VocabularyCounter();
    counter.add(['b', 'a', 'c', 'c', 'd']);
    counter.add(['a', 'c', 'rare']);
    expect(counter.vocabulary({ size: 3, keep: ['rare'] })).toEqual(['rare', 'c', 'a']);
    expect(counter.vocabulary({ size: 10, minCount: 2 })).toEqual(['c', 'a']);
    expect(counter.prunings).toBe(0);
  });

  it('stays within its bound and keeps words frequent throughout the stream', () => {
    const counter = new VocabularyCounter({ maxTracked: 100 });
    for (let d = 0; d < 500; d++) counter.add(['often', 'also', `once-${d}`, `once-${d}-b`]);
    expect(counter.tracked).toBeLessThanOrEqual(100);
    expect(counter.prunings).toBeGreaterThan(0);
    expect(counter.vocabulary({ size: 2 })).toEqual(['also', 'often']);
  });

  it('refuses bad bounds', () => {
    expect(() => new VocabularyCounter({ maxTracked: 1 })).toThrow(RangeError);
    expect(() => new VocabularyCounter().vocabulary({ size: 0 })).toThrow(/size/);
    expect(() => new VocabularyCounter().vocabulary({ size: 1, keep: ['a', 'b'] })).toThrow(/keep/);
  });
});

describe('createPhraseJoiner', () => {
  it('joins the longest phrase at the leftmost position', () => {
    const join = createPhraseJoiner([['burn', 'it'], ['burn', 'it', 'down'], ['x']]);
    expect(join(['we', 'burn', 'it', 'down', 'and', 'burn', 'it'])).toEqual(['we', 'burn it down', 'and', 'burn it']);
    expect(join(['burn'])).toEqual(['burn']);
  });

  it('rewrites every form of a term ending in * to the term itself, keeping a word listed on its own', () => {
    const join = createPhraseJoiner([['hota*'], ['hotar'], ['will', 'hurt*']]);
    expect(join(['hota', 'hotade', 'hotar', 'hotell', 'will', 'hurting', 'will', 'go'])).toEqual([
      'hota*',
      'hota*',
      'hotar',
      'hotell',
      'will hurt*',
      'will',
      'go',
    ]);
    expect(() => createPhraseJoiner([['a*', 'b']])).toThrow(/only the last/);
  });
});

describe('CooccurrenceCounter', () => {
  it('counts a symmetric window, keeping the places of unknown tokens', () => {
    const counter = new CooccurrenceCounter(['a', 'b', 'c'], { window: 1 });
    counter.add(['a', 'b', 'zz', 'c', 'a']);
    counter.add(['c', 'a']);
    const t = counter.table();
    //            a  b  c
    expect(sparseMatrixToDense(t.counts)).toEqual([
      [0, 1, 2],
      [1, 0, 0],
      [2, 0, 0],
    ]);
    expect(Array.from(t.occurrences)).toEqual([3, 1, 2]);
    expect(Array.from(t.documents)).toEqual([2, 1, 2]);
    expect(t.documentCount).toBe(2);
  });

  it('counts every pair within a wider window once per direction', () => {
    const counter = new CooccurrenceCounter(['a', 'b'], { window: 2 });
    counter.add(['a', 'x', 'b', 'x', 'a']);
    expect(sparseMatrixToDense(counter.table().counts)).toEqual([
      [0, 2],
      [2, 0],
    ]);
    expect(() => new CooccurrenceCounter(['a'], { window: 0 })).toThrow(RangeError);
    expect(() => new CooccurrenceCounter(['a', 'a'])).toThrow(/twice/);
  });
});

describe('rankBySimilarity', () => {
  it('ranks rows by mean cosine to the seed rows', () => {
    const m = sparseMatrixFromDense([
      [1, 0, 0], // seed
      [0, 1, 0], // seed
      [1, 1, 0], // cos 1/√2 to each: mean 0.7071
      [2, 0, 0], // cos 1 and 0: mean 0.5
      [0, 0, 3], // orthogonal: left out
      [0, 0, 0], // empty: left out
    ]);
    const ranked = rankBySimilarity(m, [0, 1], { limit: 10 });
    expect(ranked.map((r) => r.row)).toEqual([2, 3]);
    expect(Math.abs(ranked[0].similarity - Math.SQRT1_2)).toBeLessThan(1e-12);
    expect(Math.abs(ranked[1].similarity - 0.5)).toBeLessThan(1e-12);
    expect(rankBySimilarity(m, [0, 1], { limit: 1, exclude: (r) => r === 2 }).map((r) => r.row)).toEqual([3]);
    expect(rankBySimilarity(m, [5], { limit: 3 })).toEqual([]);
    expect(() => rankBySimilarity(m, [9], { limit: 3 })).toThrow(RangeError);
  });

  it('finds words used in the same contexts as the seed terms, through PPMI', () => {
    // A small invented corpus: "stab" and "slash" share contexts with the seed "kill"; "bake" does not.
    const docs = [
      'i will kill you tonight',
      'i will stab you tonight',
      'i will slash you tonight',
      'we bake bread at home',
      'we bake cakes at home',
      'i will kill him tonight',
      'they stab him tonight',
    ].map((d) => d.split(' '));
    const words = new VocabularyCounter();
    for (const d of docs) words.add(d);
    const vocabulary = words.vocabulary({ keep: ['kill'] });
    const counter = new CooccurrenceCounter(vocabulary, { window: 2 });
    for (const d of docs) counter.add(d);
    const table = counter.table();
    const ranked = rankBySimilarity(ppmi(table.counts), [vocabulary.indexOf('kill')], { limit: 3 });
    const top = ranked.map((r) => vocabulary[r.row]);
    expect(top.slice(0, 2).sort()).toEqual(['slash', 'stab']);
    expect(top).not.toContain('bake');
  });
});

describe('keepLargestPerRow', () => {
  it('keeps the largest entries of each row in column order', () => {
    const m = keepLargestPerRow(
      sparseMatrixFromDense([
        [1, 5, 3, 5],
        [0, 2, 0, 0],
      ]),
      2,
    );
    expect(sparseMatrixToDense(m)).toEqual([
      [0, 5, 0, 5],
      [0, 2, 0, 0],
    ]);
    expect(() => keepLargestPerRow(m, 0)).toThrow(RangeError);
  });
});

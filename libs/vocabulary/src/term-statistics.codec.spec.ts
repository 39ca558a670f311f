import { describe, expect, it } from 'vitest';
import { sparseMatrixFromDense, sparseMatrixToDense } from '#learning';
import { decodeTermStatistics, encodeTermStatistics, type TermStatistics } from './term-statistics.codec.js';

describe('term statistics codec', () => {
  const stats: TermStatistics = {
    words: ['hurt you', 'gravel', 'déjà'],
    documents: Uint32Array.from([4, 9, 1]),
    ppmi: sparseMatrixFromDense([
      [0, 1.5, 0],
      [1.5, 0, 0.25],
      [0, 0.25, 0],
    ]),
    examples: Int32Array.from([1, 2, 3, 4, 0, 0, 7, 0, 0]),
    leaningCategories: ['threat', 'ok'],
    leanings: Float32Array.from([0.5, -0.5, 0, 0, -1, 1]),
  };

  it('reads back what it wrote, whatever the alignment of the buffer it is given', () => {
    const bytes = encodeTermStatistics(stats);
    const shifted = new Uint8Array(bytes.length + 1);
    shifted.set(bytes, 1);
    const back = decodeTermStatistics(shifted.subarray(1));
    expect(back.words).toEqual(stats.words);
    expect(Array.from(back.documents)).toEqual([4, 9, 1]);
    expect(sparseMatrixToDense(back.ppmi)).toEqual(sparseMatrixToDense(stats.ppmi));
    expect(Array.from(back.examples)).toEqual(Array.from(stats.examples));
    expect(back.leaningCategories).toEqual(['threat', 'ok']);
    expect(Array.from(back.leanings)).toEqual([0.5, -0.5, 0, 0, -1, 1]);
  });

  it('refuses another format and mismatched arrays', () => {
    expect(() => decodeTermStatistics(Buffer.from('not statistics'))).toThrow(RangeError);
    const bytes = encodeTermStatistics(stats);
    expect(() => decodeTermStatistics(bytes.subarray(0, bytes.length - 4))).toThrow(/length/);
    expect(() => encodeTermStatistics({ ...stats, documents: Uint32Array.from([1]) })).toThrow(RangeError);
  });
});

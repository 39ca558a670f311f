import { describe, expect, it } from 'vitest';
import { createFeaturizer } from '#learning';
import { decodeTermCounts, encodeTermCounts, featurizerKey } from './term-counts.js';

describe('term counts', () => {
  it('round-trips the hashed counts of texts exactly', () => {
    const f = createFeaturizer({ hashBits: 18 });
    for (const text of [
      'Mossbank Commons: the bins were late again, late again!',
      'Привет мир 東京に行く',
      'ok',
      '— …',
    ]) {
      const c = f.counts(text);
      const back = decodeTermCounts(encodeTermCounts(c));
      expect(Array.from(back.indices)).toEqual(Array.from(c.indices));
      expect(Array.from(back.values)).toEqual(Array.from(c.values));
    }
  });

  it('encodes gaps and counts as varints', () => {
    // format 1, 3 terms; gaps 5, 0, 199 (index 5, 6, 206); 200 needs two bytes (0xc8 0x01), as does 199 (0xc7 0x01).
    const bytes = encodeTermCounts({ indices: Int32Array.from([5, 6, 206]), values: Float64Array.from([1, 200, 3]) });
    expect(Array.from(bytes)).toEqual([1, 3, 5, 1, 0, 0xc8, 0x01, 0xc7, 0x01, 3]);
    expect(Array.from(decodeTermCounts(bytes).indices)).toEqual([5, 6, 206]);
    expect(Array.from(decodeTermCounts(bytes).values)).toEqual([1, 200, 3]);
    // The largest values stored take four bytes each and come back whole.
    const big = { indices: Int32Array.from([2 ** 28 - 1]), values: Float64Array.from([2 ** 28 - 1]) };
    const bigBytes = encodeTermCounts(big);
    expect(bigBytes.length).toBe(1 + 1 + 4 + 4);
    expect(Array.from(decodeTermCounts(bigBytes).indices)).toEqual([2 ** 28 - 1]);
    expect(Array.from(decodeTermCounts(bigBytes).values)).toEqual([2 ** 28 - 1]);
    expect(
      Array.from(
        decodeTermCounts(encodeTermCounts({ indices: new Int32Array(0), values: new Float64Array(0) })).indices,
      ),
    ).toEqual([]);
  });

  it('refuses counts it cannot store and bytes it did not write', () => {
    expect(() => encodeTermCounts({ indices: Int32Array.from([3, 3]), values: Float64Array.from([1, 1]) })).toThrow(
      /ascending/,
    );
    expect(() => encodeTermCounts({ indices: Int32Array.from([3]), values: Float64Array.from([0.5]) })).toThrow(
      /whole count/,
    );
    expect(() => encodeTermCounts({ indices: Int32Array.from([3]), values: Float64Array.from([2 ** 28]) })).toThrow(
      /whole count/,
    );
    expect(() => decodeTermCounts(Uint8Array.from([2, 0]))).toThrow(/format/);
    expect(() => decodeTermCounts(Uint8Array.from([1, 2, 5]))).toThrow(/truncated/);
    expect(() => decodeTermCounts(Uint8Array.from([1, 1, 0x85]))).toThrow(/truncated/);
    expect(() => decodeTermCounts(Uint8Array.from([1, 1, 5, 0x83]))).toThrow(/truncated/);
    expect(() => decodeTermCounts(Uint8Array.from([1, 0xff, 0xff, 0xff, 0x7f]))).toThrow(/truncated/);
    expect(() => decodeTermCounts(Uint8Array.from([1, 0, 9]))).toThrow(/left over/);
  });

  it('names the featuriser settings', () => {
    expect(featurizerKey(createFeaturizer({ hashBits: 18 }).options)).toBe('h18w2c3-5');
    expect(featurizerKey(createFeaturizer({ hashBits: 12, maxWordNgram: 1, charNgrams: null }).options)).toBe(
      'h12w1c0',
    );
  });
});

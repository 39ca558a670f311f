import { describe, expect, it } from 'vitest';
import type { SparseVector } from '../features/sparse-vector.js';
import { createRng } from '../random/rng.js';
import { normalizedTextHash } from '../text/normalized-text-hash.js';
import { pickBatch, type BatchCandidate } from './batch-picker.js';

function vec(indices: number[], values: number[]): SparseVector {
  return { indices: Int32Array.from(indices), values: Float64Array.from(values) };
}

describe('pickBatch', () => {
  const candidates: BatchCandidate[] = Array.from({ length: 100 }, (_, i) => {
    const p = 0.5 + (i / 100) * 0.5; // item 0 the most uncertain
    return { id: i, probabilities: [p, 1 - p], vector: vec([i], [1]) };
  });

  it('takes the most uncertain items after the random share', () => {
    const picks = pickBatch(candidates, { size: 10, randomShare: 0.2, strategy: 'entropy', rng: createRng(1) });
    expect(picks.length).toBe(10);
    expect(picks.filter((p) => p.draw === 'random').length).toBe(2);
    const uncertain = picks.filter((p) => p.draw === 'uncertainty').map((p) => p.id);
    // The 8 most uncertain not already drawn at random, in order.
    const randomIds = new Set(picks.filter((p) => p.draw === 'random').map((p) => p.id));
    const expected = candidates
      .map((c) => c.id)
      .filter((id) => !randomIds.has(id))
      .slice(0, 8);
    expect(uncertain).toEqual(expected);
    expect(new Set(picks.map((p) => p.id)).size).toBe(10);
  });

  it('keeps the expected random share for fractional counts', () => {
    const rng = createRng(5);
    let randoms = 0;
    for (let t = 0; t < 2000; t++)
      randoms += pickBatch(candidates, { size: 7, randomShare: 0.2, strategy: 'margin', rng }).filter(
        (p) => p.draw === 'random',
      ).length;
    // Expected 1.4 a batch; binomial-like sd of the mean ≈ 0.5/√2000 ≈ 0.011: allow 0.05.
    expect(Math.abs(randoms / 2000 - 1.4)).toBeLessThan(0.05);
  });

  it('skips near-duplicates of items already in the batch', () => {
    const dup: BatchCandidate[] = [
      {
        id: 1,
        probabilities: [0.5, 0.5],
        vector: vec([1, 2], [0.6, 0.8]),
        textHash: normalizedTextHash('Hello there'),
      },
      { id: 2, probabilities: [0.5, 0.5], vector: vec([1, 2], [0.61, 0.79]) },
      { id: 3, probabilities: [0.5, 0.5], vector: vec([7], [1]), textHash: normalizedTextHash('HELLO,   there!') },
      { id: 4, probabilities: [0.6, 0.4], vector: vec([9], [1]) },
    ];
    const picks = pickBatch(dup, { size: 3, randomShare: 0, strategy: 'least-confidence', rng: createRng(1) });
    // 2 is a cosine near-duplicate of 1, 3 has 1's normalised text.
    expect(picks.map((p) => p.id)).toEqual([1, 4]);
  });

  it('draws only at random with the random strategy and checks options', () => {
    const picks = pickBatch(candidates, { size: 5, randomShare: 0, strategy: 'random', rng: createRng(2) });
    expect(picks.every((p) => p.draw === 'random')).toBe(true);
    expect(() => pickBatch(candidates, { size: 5, randomShare: 2, strategy: 'entropy', rng: createRng(1) })).toThrow(
      /randomShare/,
    );
    expect(() => pickBatch(candidates, { size: -1, randomShare: 0, strategy: 'entropy', rng: createRng(1) })).toThrow(
      /size/,
    );
  });
});

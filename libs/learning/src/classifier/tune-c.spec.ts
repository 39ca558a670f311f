import { describe, expect, it } from 'vitest';
import type { SparseVector } from '../features/sparse-vector.js';
import { createRng } from '../random/rng.js';
import { tuneC } from './tune-c.js';

/** Two classes on features 0–4 and 5–9, with shared noise on 10–19. */
function problem(n: number, seed: number): { x: SparseVector[]; y: string[] } {
  const rng = createRng(seed);
  const x: SparseVector[] = [];
  const y: string[] = [];
  for (let i = 0; i < n; i++) {
    const label = i % 2 === 0 ? 'a' : 'b';
    const signal = (label === 'a' ? 0 : 5) + Math.floor(rng.next() * 5);
    const noise = 10 + Math.floor(rng.next() * 10);
    x.push({ indices: Int32Array.of(signal, noise), values: Float64Array.of(1, 0.5 + rng.next()) });
    y.push(rng.next() < 0.1 ? (label === 'a' ? 'b' : 'a') : label);
  }
  return { x, y };
}

describe('tuneC', () => {
  const { x, y } = problem(120, 7);
  const options = { categories: ['a', 'b'], hashBits: 5, seed: 3, folds: 4 };

  it('scores every candidate by k-fold macro-F1 and picks the best, the same for the same seed', () => {
    const r = tuneC(x, y, { ...options, grid: [0.01, 1, 100] });
    expect(r.folds).toBe(4);
    expect(r.scores.map((s) => s.c)).toEqual([0.01, 1, 100]);
    const best = Math.max(...r.scores.map((s) => s.macroF1));
    expect(r.scores.find((s) => s.c === r.c)!.macroF1).toBe(best);
    for (const s of r.scores) {
      expect(s.macroF1).toBeGreaterThan(0);
      expect(s.macroF1).toBeLessThanOrEqual(1);
    }
    expect(tuneC(x, y, { ...options, grid: [0.01, 1, 100] })).toEqual(r);
  });

  it('rejects bad options', () => {
    expect(() => tuneC(x, y, { ...options, folds: 1 })).toThrow(/folds/);
    expect(() => tuneC(x, y, { ...options, grid: [] })).toThrow(/grid/);
    expect(() => tuneC(x, y, { ...options, grid: [0] })).toThrow(/grid/);
    expect(() => tuneC(x.slice(0, 3), y.slice(0, 3), options)).toThrow(/cannot be split/);
    expect(() => tuneC(x, y.slice(1), options)).toThrow(/differ in length/);
  });
});

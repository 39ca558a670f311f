import { describe, expect, it } from 'vitest';
import { createRng, randomInt, shuffleInPlace } from './rng.js';

describe('createRng', () => {
  it('is reproducible for a seed and differs between seeds', () => {
    const a = createRng(1);
    const b = createRng(1);
    const c = createRng(2);
    const xa = Array.from({ length: 5 }, () => a.next());
    expect(Array.from({ length: 5 }, () => b.next())).toEqual(xa);
    expect(Array.from({ length: 5 }, () => c.next())).not.toEqual(xa);
  });

  it('is roughly uniform on [0, 1)', () => {
    // Mean of 100 000 uniforms: sd = 1/sqrt(12e5) ≈ 0.0009; tolerance 0.005.
    const rng = createRng(42);
    let sum = 0;
    let outside = 0;
    for (let i = 0; i < 100_000; i++) {
      const x = rng.next();
      if (!(x >= 0 && x < 1)) outside++;
      sum += x;
    }
    expect(outside).toBe(0);
    expect(Math.abs(sum / 100_000 - 0.5)).toBeLessThan(0.005);
  });

  it('shuffles into a permutation and checks its arguments', () => {
    const items = Array.from({ length: 50 }, (_, i) => i);
    const shuffled = shuffleInPlace([...items], createRng(3));
    expect([...shuffled].sort((x, y) => x - y)).toEqual(items);
    expect(shuffled).not.toEqual(items);
    expect(() => randomInt(createRng(1), 0)).toThrow(RangeError);
    expect(() => createRng(Number.NaN)).toThrow(/seed/);
  });
});

/**
 * Seeded pseudo-random numbers, injectable wherever the learning core needs
 * randomness, so that every run and every test is reproducible.
 */
export interface Rng {
  /** Uniform on [0, 1). */
  next(): number;
}

/**
 * Mulberry32 (Tommy Ettinger, public domain): a 32-bit state generator with
 * full period 2^32, ample for shuffles and sampling here. Common practice, no
 * published source.
 *
 * @param seed any finite number; its low 32 bits seed the state.
 */
export function createRng(seed: number): Rng {
  if (!Number.isFinite(seed)) throw new RangeError(`seed must be a finite number, got ${seed}`);
  let state = (seed >>> 0) ^ 0x6d2b79f5;
  return {
    next(): number {
      state = (state + 0x6d2b79f5) | 0;
      let t = state;
      t = Math.imul(t ^ (t >>> 15), t | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    },
  };
}

/** Uniform integer in [0, n). */
export function randomInt(rng: Rng, n: number): number {
  if (!Number.isInteger(n) || n <= 0) throw new RangeError(`n must be a positive integer, got ${n}`);
  return Math.floor(rng.next() * n);
}

/** Fisher–Yates shuffle (Durstenfeld 1964) in place; returns the array. */
export function shuffleInPlace<T>(items: T[], rng: Rng): T[] {
  for (let i = items.length - 1; i > 0; i--) {
    const j = Math.floor(rng.next() * (i + 1));
    const tmp = items[i];
    items[i] = items[j];
    items[j] = tmp;
  }
  return items;
}

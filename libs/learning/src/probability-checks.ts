/**
 * Boundary checks shared by the numeric modules: they throw RangeError or
 * TypeError naming the argument and the bad value.
 */

/** Tolerance on Σp = 1 for probability vectors (float rounding of normalised outputs). */
export const PROBABILITY_SUM_TOLERANCE = 1e-6;

/** Checks that `p` is a probability vector: finite entries in [0, 1] summing to 1 ± 1e-6. */
export function assertProbabilities(p: ArrayLike<number>, name: string): void {
  // JavaScript callers and values read from JSON are not held to the type.
  if ((p as unknown) === null || typeof p !== 'object' || typeof p.length !== 'number') {
    throw new TypeError(`${name} must be an array of probabilities`);
  }
  if (p.length < 1) throw new RangeError(`${name} must not be empty`);
  let sum = 0;
  for (let i = 0; i < p.length; i++) {
    const v = p[i];
    if (typeof v !== 'number' || !(v >= 0 && v <= 1))
      throw new RangeError(`${name}[${i}] must be a probability in [0, 1], got ${v}`);
    sum += v;
  }
  if (Math.abs(sum - 1) > PROBABILITY_SUM_TOLERANCE) throw new RangeError(`${name} must sum to 1, sums to ${sum}`);
}

/** Checks that `label` is an integer index into a vector of length `k`. */
export function assertLabel(label: number, k: number, name: string): void {
  if (!Number.isInteger(label) || label < 0 || label >= k) {
    throw new RangeError(`${name} must be an integer in 0…${k - 1}, got ${label}`);
  }
}

/** Checks 0 < alpha < 1. */
export function assertAlpha(alpha: number, name = 'alpha'): void {
  if (typeof alpha !== 'number' || !(alpha > 0 && alpha < 1))
    throw new RangeError(`${name} must be in (0, 1), got ${alpha}`);
}

import { inverseRegularizedIncompleteBeta } from './incomplete-beta.js';

/** Two-sided interval for a binomial proportion. */
export interface ProportionInterval {
  lower: number;
  upper: number;
}

/** z for a two-sided 95 % interval, Φ⁻¹(0.975), to the digits Newcombe's table needs. */
export const Z_95 = 1.959963985;

function check(x: number, n: number): void {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`n must be a positive integer, got ${n}`);
  if (!Number.isInteger(x) || x < 0 || x > n) throw new RangeError(`x must be an integer in 0…${n}, got ${x}`);
}

function checkZ(z: number): void {
  if (!(z > 0) || !Number.isFinite(z)) throw new RangeError(`z must be a positive finite number, got ${z}`);
}

/**
 * Wilson score interval (Wilson 1927; Newcombe 1998, method 3):
 * (2np + z² ± z√(z² + 4np(1−p))) / (2(n + z²)).
 */
export function wilsonInterval(x: number, n: number, z = Z_95): ProportionInterval {
  check(x, n);
  checkZ(z);
  const p = x / n;
  const denominator = 2 * (n + z * z);
  const centre = 2 * n * p + z * z;
  const half = z * Math.sqrt(z * z + 4 * n * p * (1 - p));
  return { lower: Math.max(0, (centre - half) / denominator), upper: Math.min(1, (centre + half) / denominator) };
}

/**
 * Wilson score interval with continuity correction (Newcombe 1998, method 4):
 * L = (2np + z² − 1 − z√(z² − 2 − 1/n + 4p(n(1−p) + 1))) / (2(n + z²)),
 * U = (2np + z² + 1 + z√(z² + 2 − 1/n + 4p(n(1−p) − 1))) / (2(n + z²)),
 * with L = 0 when x = 0 and U = 1 when x = n.
 */
export function wilsonContinuityCorrectedInterval(x: number, n: number, z = Z_95): ProportionInterval {
  check(x, n);
  checkZ(z);
  const p = x / n;
  const denominator = 2 * (n + z * z);
  const lower =
    x === 0 ? 0 : (2 * n * p + z * z - 1 - z * Math.sqrt(z * z - 2 - 1 / n + 4 * p * (n * (1 - p) + 1))) / denominator;
  const upper =
    x === n ? 1 : (2 * n * p + z * z + 1 + z * Math.sqrt(z * z + 2 - 1 / n + 4 * p * (n * (1 - p) - 1))) / denominator;
  return { lower: Math.max(0, lower), upper: Math.min(1, upper) };
}

/**
 * Clopper–Pearson "exact" interval (Clopper & Pearson 1934; Newcombe 1998,
 * method 5) from beta quantiles: L = B⁻¹(α/2; x, n − x + 1),
 * U = B⁻¹(1 − α/2; x + 1, n − x), L = 0 when x = 0, U = 1 when x = n.
 *
 * @param confidence two-sided level 1 − α (default 0.95)
 */
export function clopperPearsonInterval(x: number, n: number, confidence = 0.95): ProportionInterval {
  check(x, n);
  if (!(confidence > 0 && confidence < 1)) throw new RangeError(`confidence must be in (0, 1), got ${confidence}`);
  const alpha = 1 - confidence;
  const lower = x === 0 ? 0 : inverseRegularizedIncompleteBeta(alpha / 2, x, n - x + 1);
  const upper = x === n ? 1 : inverseRegularizedIncompleteBeta(1 - alpha / 2, x + 1, n - x);
  return { lower, upper };
}

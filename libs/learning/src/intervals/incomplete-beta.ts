/**
 * ln Γ(x) for x > 0 by the Lanczos approximation (g = 7, n = 9 coefficients;
 * Lanczos 1964, coefficients as in Godfrey's table, relative error < 1e-15),
 * with the reflection formula below 0.5.
 */
export function logGamma(x: number): number {
  if (!(x > 0)) throw new RangeError(`x must be > 0, got ${x}`);
  const g = 7;
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
  const z = x - 1;
  let a = c[0];
  const t = z + g + 0.5;
  for (let i = 1; i < g + 2; i++) a += c[i] / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/**
 * Continued fraction for the incomplete beta function, evaluated by the
 * modified Lentz method (Lentz 1976; Press et al., Numerical Recipes, §6.4,
 * `betacf`).
 */
function betaContinuedFraction(x: number, a: number, b: number): number {
  const TINY = 1e-300;
  const EPS = 1e-15;
  const qab = a + b;
  const qap = a + 1;
  const qam = a - 1;
  let c = 1;
  let d = 1 - (qab * x) / qap;
  if (Math.abs(d) < TINY) d = TINY;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 10_000; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < TINY) d = TINY;
    c = 1 + aa / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < TINY) d = TINY;
    c = 1 + aa / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < EPS) return h;
  }
  return h;
}

/**
 * Regularised incomplete beta function I_x(a, b) = B(x; a, b) / B(a, b), by
 * its continued fraction, using the symmetry I_x(a, b) = 1 − I_{1−x}(b, a)
 * where the fraction converges slowly (Press et al., Numerical Recipes, §6.4).
 */
export function regularizedIncompleteBeta(x: number, a: number, b: number): number {
  if (!(a > 0) || !(b > 0)) throw new RangeError(`a and b must be > 0, got a = ${a}, b = ${b}`);
  if (!(x >= 0 && x <= 1)) throw new RangeError(`x must be in [0, 1], got ${x}`);
  if (x === 0 || x === 1) return x;
  const lnFront = logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log1p(-x);
  const front = Math.exp(lnFront);
  if (x < (a + 1) / (a + b + 2)) return (front * betaContinuedFraction(x, a, b)) / a;
  return 1 - (front * betaContinuedFraction(1 - x, b, a)) / b;
}

/**
 * Inverse of the regularised incomplete beta in x: the x with I_x(a, b) = p.
 * I_x is increasing in x, so bisection on [0, 1] converges surely; 200 halvings
 * bring the bracket to the floating-point resolution, and the loop stops as
 * soon as the bracket stops shrinking.
 */
export function inverseRegularizedIncompleteBeta(p: number, a: number, b: number): number {
  if (!(p >= 0 && p <= 1)) throw new RangeError(`p must be in [0, 1], got ${p}`);
  if (!(a > 0) || !(b > 0)) throw new RangeError(`a and b must be > 0, got a = ${a}, b = ${b}`);
  if (p === 0) return 0;
  if (p === 1) return 1;
  let lo = 0;
  let hi = 1;
  for (let i = 0; i < 200; i++) {
    const mid = (lo + hi) / 2;
    if (mid === lo || mid === hi) break;
    if (regularizedIncompleteBeta(mid, a, b) < p) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

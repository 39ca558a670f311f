import { describe, expect, it } from 'vitest';
import { binomialCdf, binomialQuantile } from './binomial-quantile.js';
import { normalQuantile, twoSidedZ } from './normal-quantile.js';

describe('normal quantile (Wichura 1988, AS 241)', () => {
  it('gives the z values of published tables', () => {
    // Φ⁻¹(0.975) = 1.959963985 to the digits Newcombe (1998), Stat. Med. 17:857–872, uses [paper];
    // Φ⁻¹(0.95) = 1.6448536 and Φ⁻¹(0.995) = 2.5758293: standard normal tables (common practice, no source).
    expect(Math.abs(normalQuantile(0.975) - 1.959963985)).toBeLessThan(1e-9);
    expect(Math.abs(twoSidedZ(0.95) - 1.959963985)).toBeLessThan(1e-9);
    expect(Math.abs(twoSidedZ(0.9) - 1.6448536)).toBeLessThan(1e-7);
    expect(Math.abs(twoSidedZ(0.99) - 2.5758293)).toBeLessThan(1e-7);
    expect(normalQuantile(0.5)).toBe(0);
  });

  it('is odd about one half and reaches far tails (all three branches)', () => {
    // Dyadic p, so that 1 − p is exact.
    for (const p of [2 ** -50, 2 ** -40, 2 ** -10, 0.015625, 0.375]) {
      expect(normalQuantile(p)).toBeLessThan(0);
      expect(Math.abs(normalQuantile(p) + normalQuantile(1 - p))).toBeLessThan(
        1e-8 * Math.abs(normalQuantile(p)) + 1e-12,
      );
    }
    // Φ(−37.5) ≈ 4.6e-308 (recalled from memory): the far-tail branch stays finite.
    expect(normalQuantile(1e-300)).toBeGreaterThan(-38);
    expect(normalQuantile(1e-300)).toBeLessThan(-36);
    expect(() => normalQuantile(1)).toThrow(/p must/);
  });
});

describe('binomial distribution function and quantile', () => {
  it('matches the sum of the probabilities', () => {
    // Binomial(10, 0.5): P(X ≤ 2) = (1 + 10 + 45)/1024 = 0.0546875, P(X ≤ 5) = 638/1024.
    expect(Math.abs(binomialCdf(2, 10, 0.5) - 56 / 1024)).toBeLessThan(1e-12);
    expect(Math.abs(binomialCdf(5, 10, 0.5) - 638 / 1024)).toBeLessThan(1e-12);
    expect(binomialQuantile(0.05, 10, 0.5)).toBe(2);
    expect(binomialQuantile(0.0546875 - 1e-9, 10, 0.5)).toBe(2);
    expect(binomialQuantile(0.0546875 + 1e-9, 10, 0.5)).toBe(3);
    expect(binomialQuantile(0.6, 10, 0.5)).toBe(5);
    expect(binomialQuantile(0.99, 10, 0)).toBe(0);
    expect(binomialQuantile(0.01, 10, 1)).toBe(10);
    expect(binomialCdf(-1, 10, 0.3)).toBe(0);
    expect(binomialCdf(10, 10, 0.3)).toBe(1);
    // Binomial(200, 0.02): P(X ≤ 0) = 0.98^200.
    expect(Math.abs(binomialCdf(0, 200, 0.02) - 0.98 ** 200)).toBeLessThan(1e-12);
    expect(() => binomialQuantile(0.5, 3.5, 0.2)).toThrow(/n must/);
  });
});

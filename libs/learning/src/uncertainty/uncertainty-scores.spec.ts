import { describe, expect, it } from 'vitest';
import { entropy, leastConfidence, margin, uncertainty } from './uncertainty-scores.js';

const TOL = 5e-5;

describe('uncertainty scores', () => {
  it('match the worked example', () => {
    // Settles (2009), "Active Learning Literature Survey", §3.1 [memory for
    // equation numbers]; example p = (0.5, 0.3, 0.2) recomputed.
    const p = [0.5, 0.3, 0.2];
    expect(Math.abs(leastConfidence(p) - 0.5)).toBeLessThan(TOL);
    expect(Math.abs(margin(p) - 0.2)).toBeLessThan(TOL);
    expect(Math.abs(entropy(p) - 1.029653)).toBeLessThan(TOL);
  });

  it('order items the same way at the extremes', () => {
    const sure = [0.98, 0.01, 0.01];
    const unsure = [0.34, 0.33, 0.33];
    for (const s of ['entropy', 'margin', 'least-confidence'] as const) {
      expect(uncertainty(unsure, s)).toBeGreaterThan(uncertainty(sure, s));
    }
    // Uniform over 3: entropy ln 3 (its maximum).
    expect(Math.abs(entropy([1 / 3, 1 / 3, 1 / 3]) - Math.log(3))).toBeLessThan(1e-12);
    expect(entropy([1, 0, 0])).toBe(0);
  });

  it('reject bad input naming the argument', () => {
    expect(() => entropy([0.5, 0.6])).toThrow(/p must sum to 1/);
    expect(() => margin([1.2, -0.2])).toThrow(/p\[0\]/);
    expect(() => uncertainty([1], 'nope' as 'entropy')).toThrow(/strategy/);
  });
});

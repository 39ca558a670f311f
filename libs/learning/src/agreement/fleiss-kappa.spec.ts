import { describe, expect, it } from 'vitest';
import { fleissKappa } from './fleiss-kappa.js';

const TOL = 5e-5;

// Fleiss (1971), "Measuring nominal scale agreement among many raters", Psychol. Bull. 76(5):378–382,
// Table 1 [reproduced; printed .430 from memory]: 30 subjects, 6 raters, 5 categories.
const FLEISS_1971 = [
  [0, 0, 0, 6, 0],
  [0, 3, 0, 0, 3],
  [0, 1, 4, 0, 1],
  [0, 0, 0, 0, 6],
  [0, 3, 0, 3, 0],
  [2, 0, 4, 0, 0],
  [0, 0, 4, 0, 2],
  [2, 0, 3, 1, 0],
  [2, 0, 0, 4, 0],
  [0, 0, 0, 0, 6],
  [1, 0, 0, 5, 0],
  [1, 1, 0, 4, 0],
  [0, 3, 3, 0, 0],
  [1, 0, 0, 5, 0],
  [0, 2, 0, 3, 1],
  [0, 0, 5, 0, 1],
  [3, 0, 0, 1, 2],
  [5, 1, 0, 0, 0],
  [0, 2, 0, 4, 0],
  [1, 0, 2, 0, 3],
  [0, 0, 0, 0, 6],
  [0, 1, 0, 5, 0],
  [0, 2, 0, 1, 3],
  [2, 0, 0, 4, 0],
  [1, 0, 0, 4, 1],
  [0, 5, 0, 1, 0],
  [4, 0, 0, 0, 2],
  [0, 2, 0, 4, 0],
  [1, 0, 5, 0, 0],
  [0, 0, 0, 0, 6],
];

// Wikipedia, "Fleiss' kappa", worked example, also in statsmodels' tests [reproduced]: 10 subjects, 14 raters.
const ENCYCLOPEDIA = [
  [0, 0, 0, 0, 14],
  [0, 2, 6, 4, 2],
  [0, 0, 3, 5, 6],
  [0, 3, 9, 2, 0],
  [2, 2, 8, 1, 1],
  [7, 7, 0, 0, 0],
  [3, 2, 6, 3, 0],
  [2, 5, 3, 2, 2],
  [6, 5, 2, 1, 0],
  [0, 2, 2, 3, 7],
];

describe("Fleiss' kappa", () => {
  it('Fleiss (1971) Table 1', () => {
    const r = fleissKappa(FLEISS_1971);
    expect(r.subjects).toBe(30);
    expect(r.raters).toBe(6);
    // Column totals 26, 26, 30, 55, 43 over 180 assignments.
    expect(r.proportions.map((p) => Math.round(p * 180))).toEqual([26, 26, 30, 55, 43]);
    expect(Math.abs(r.observed - 5 / 9)).toBeLessThan(TOL);
    expect(Math.abs(r.expected - 0.219938)).toBeLessThan(TOL);
    expect(Math.abs(r.kappa - 0.4302445)).toBeLessThan(TOL);
  });

  it('per-category kappa averages back to the overall one (Fleiss 1971, eq. 10)', () => {
    // κ = Σ_j p_j q_j κ_j / Σ_j p_j q_j: an identity of the paper, recomputed on its Table 1.
    const r = fleissKappa(FLEISS_1971);
    const pq = r.proportions.map((p) => p * (1 - p));
    const weighted = r.perCategory.reduce((s, k, j) => s + pq[j] * k, 0) / pq.reduce((s, x) => s + x, 0);
    expect(Math.abs(weighted - r.kappa)).toBeLessThan(1e-12);
    // A category given to nobody has an undefined kappa.
    expect(
      fleissKappa([
        [2, 0, 0],
        [1, 1, 0],
      ]).perCategory[2],
    ).toBeNaN();
  });

  it('encyclopedia example', () => {
    const r = fleissKappa(ENCYCLOPEDIA);
    expect(Math.abs(r.observed - 688 / 1820)).toBeLessThan(TOL);
    expect(Math.abs(r.expected - 0.212755)).toBeLessThan(TOL);
    expect(Math.abs(r.kappa - 0.209931)).toBeLessThan(TOL);
  });

  it('rejects bad input naming the argument', () => {
    expect(() => fleissKappa([[1, 1], [2]])).toThrow(/counts is ragged/);
    expect(() =>
      fleissKappa([
        [1, 1],
        [2, 1],
      ]),
    ).toThrow(/counts\[1\] sums to 3/);
    expect(() =>
      fleissKappa([
        [1, 0],
        [0, 1],
      ]),
    ).toThrow(/at least two raters/);
    expect(() =>
      fleissKappa([
        [3, -1],
        [1, 1],
      ]),
    ).toThrow(/counts\[0\]\[1\]/);
    expect(() => fleissKappa([])).toThrow(RangeError);
    expect(() => fleissKappa([[2]])).toThrow(/at least 2 columns/);
    expect(() => fleissKappa([['a', 1]] as never)).toThrow(TypeError);
  });
});

import { describe, expect, it } from 'vitest';
import {
  clopperPearsonInterval,
  wilsonContinuityCorrectedInterval,
  wilsonInterval,
  Z_95,
} from './binomial-intervals.js';
import { inverseRegularizedIncompleteBeta, logGamma, regularizedIncompleteBeta } from './incomplete-beta.js';

// Newcombe (1998), "Two-sided confidence intervals for the single proportion:
// comparison of seven methods", Stat. Med. 17:857–872, Table I [reproduced in
// R ratesci's tests and recomputed]. The table prints four
// decimals, so the tolerance is half a unit in the fourth place.
const TABLE_TOL = 5e-5;
const TABLE = [
  { x: 81, n: 263, wilson: [0.2553, 0.3662], cc: [0.2535, 0.3682], cp: [0.2527, 0.3676] },
  { x: 15, n: 148, wilson: [0.0624, 0.1605], cc: [0.0598, 0.1644], cp: [0.0578, 0.1617] },
  { x: 0, n: 20, wilson: [0.0, 0.1611], cc: [0.0, 0.2005], cp: [0.0, 0.1684] },
  { x: 1, n: 29, wilson: [0.0061, 0.1718], cc: [0.0018, 0.1963], cp: [0.0009, 0.1776] },
];

function expectInterval(got: { lower: number; upper: number }, want: number[]): void {
  expect(Math.abs(got.lower - want[0])).toBeLessThanOrEqual(TABLE_TOL);
  expect(Math.abs(got.upper - want[1])).toBeLessThanOrEqual(TABLE_TOL);
}

describe('binomial intervals (Newcombe 1998, Table I)', () => {
  for (const row of TABLE) {
    it(`${row.x}/${row.n}`, () => {
      expect(Z_95).toBe(1.959963985);
      expectInterval(wilsonInterval(row.x, row.n), row.wilson);
      expectInterval(wilsonContinuityCorrectedInterval(row.x, row.n), row.cc);
      expectInterval(clopperPearsonInterval(row.x, row.n), row.cp);
    });
  }

  it('rejects impossible counts', () => {
    expect(() => wilsonInterval(5, 4)).toThrow(/x must/);
    expect(() => clopperPearsonInterval(1, 0)).toThrow(/n must/);
    expect(() => clopperPearsonInterval(1, 10, 1)).toThrow(/confidence/);
  });
});

describe('incomplete beta', () => {
  it('matches closed forms', () => {
    // I_x(1, b) = 1 − (1 − x)^b and I_x(a, 1) = x^a (common practice, no source).
    expect(Math.abs(regularizedIncompleteBeta(0.3, 1, 4) - (1 - 0.7 ** 4))).toBeLessThan(1e-12);
    expect(Math.abs(regularizedIncompleteBeta(0.3, 2.5, 1) - 0.3 ** 2.5)).toBeLessThan(1e-12);
    // I_0.5(a, a) = 1/2 by symmetry.
    expect(Math.abs(regularizedIncompleteBeta(0.5, 37, 37) - 0.5)).toBeLessThan(1e-12);
    // ln Γ(5) = ln 24; Γ(1/2) = √π.
    expect(Math.abs(logGamma(5) - Math.log(24))).toBeLessThan(1e-12);
    expect(Math.abs(logGamma(0.5) - 0.5 * Math.log(Math.PI))).toBeLessThan(1e-12);
  });

  it('inverts itself', () => {
    for (const [a, b] of [
      [0.5, 0.5],
      [3, 200],
      [82, 183],
      [1, 29],
    ]) {
      for (const p of [0.001, 0.025, 0.5, 0.975]) {
        const x = inverseRegularizedIncompleteBeta(p, a, b);
        expect(Math.abs(regularizedIncompleteBeta(x, a, b) - p)).toBeLessThan(1e-10);
      }
    }
  });
});

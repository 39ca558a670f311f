import { describe, expect, it } from 'vitest';
import { createRng } from '../random/rng.js';
import { alphaBootstrap, sortedQuantile } from './alpha-bootstrap.js';
import { krippendorffAlpha } from './krippendorff-alpha.js';

const TOL = 5e-5;

// Krippendorff (2011), "Computing Krippendorff's Alpha-Reliability", Annenberg School for Communication,
// section C [reproduced in R's irr documentation and several test suites]:
// 4 observers × 12 units, null missing. Written observers × units as in the paper, transposed below.
const SECTION_C_BY_OBSERVER = [
  [1, 2, 3, 3, 2, 1, 4, 1, 2, null, null, null],
  [1, 2, 3, 3, 2, 2, 4, 1, 2, 5, null, 3],
  [null, 3, 3, 3, 2, 3, 4, 2, 2, 5, 1, null],
  [1, 2, 3, 3, 2, 4, 4, 1, 2, 5, 1, null],
];
const transpose = <T>(rows: T[][]): T[][] => rows[0].map((_, u) => rows.map((r) => r[u]));
const SECTION_C = transpose(SECTION_C_BY_OBSERVER);

describe("Krippendorff's alpha", () => {
  it('section C, nominal, with missing values', () => {
    const r = krippendorffAlpha(SECTION_C, 'nominal');
    // Unit 12 has one value and is not pairable: n = 40 pairable values; D_o = 0.2, D_e = 152/195.
    expect(r.pairableValues).toBe(40);
    expect(r.pairableUnits).toBe(11);
    expect(Math.abs(r.observedDisagreement - 0.2)).toBeLessThan(TOL);
    expect(Math.abs(r.expectedDisagreement - 152 / 195)).toBeLessThan(TOL);
    expect(Math.abs(r.alpha - 113 / 152)).toBeLessThan(TOL);
  });

  it('section C, ordinal and interval', () => {
    expect(Math.abs(krippendorffAlpha(SECTION_C, 'ordinal').alpha - 0.815388)).toBeLessThan(TOL);
    expect(Math.abs(krippendorffAlpha(SECTION_C, 'interval').alpha - 0.849107)).toBeLessThan(TOL);
  });

  it('does not depend on the order of observers or units', () => {
    const shuffled = [...SECTION_C].reverse().map((u) => [u[2], u[0], u[3], u[1]]);
    expect(Math.abs(krippendorffAlpha(shuffled).alpha - 113 / 152)).toBeLessThan(1e-12);
  });

  it('sections A and B', () => {
    // Same paper, sections A and B [memory for the data; recomputed]; the paper prints three decimals,
    // so the tolerance is half a unit in the third place.
    const a = transpose([
      [0, 1, 0, 0, 0, 0, 0, 0, 1, 0],
      [1, 1, 1, 0, 0, 1, 0, 0, 0, 0],
    ]);
    expect(Math.abs(krippendorffAlpha(a).alpha - 0.095)).toBeLessThan(5e-4);
    const b = transpose([
      ['a', 'a', 'b', 'b', 'd', 'c', 'c', 'c', 'e', 'd', 'd', 'a'],
      ['b', 'a', 'b', 'b', 'b', 'c', 'c', 'c', 'e', 'd', 'd', 'd'],
    ]);
    expect(Math.abs(krippendorffAlpha(b).alpha - 0.692)).toBeLessThan(5e-4);
  });

  it('is NaN when there is nothing to compare', () => {
    expect(
      krippendorffAlpha([
        ['x', null],
        [null, 'y'],
      ]).alpha,
    ).toBeNaN();
    expect(
      krippendorffAlpha([
        ['x', 'x'],
        ['x', 'x'],
      ]).alpha,
    ).toBeNaN();
  });

  it('rejects bad input naming the argument', () => {
    expect(() => krippendorffAlpha([[1, 2], [1]])).toThrow(/table is ragged/);
    expect(() => krippendorffAlpha([[1], [2]])).toThrow(/at least two observers/);
    expect(() => krippendorffAlpha([['a', 'b']], 'interval')).toThrow(/table\[0\]\[0\].*finite number/);
    expect(() => krippendorffAlpha([[1, 'b']])).toThrow(/mixes/);
    expect(() => krippendorffAlpha([[1, 2]], 'ratio' as never)).toThrow(/level/);
    expect(() => krippendorffAlpha('x' as never)).toThrow(TypeError);
  });
});

describe('bootstrap interval for alpha', () => {
  it('is reproducible from the seed and brackets the estimate', () => {
    const one = alphaBootstrap(SECTION_C, { rng: createRng(7) });
    const two = alphaBootstrap(SECTION_C, { rng: createRng(7) });
    expect(one).toEqual(two);
    expect(one.resamples).toBe(1000);
    expect(Math.abs(one.alpha - 113 / 152)).toBeLessThan(TOL);
    expect(one.lower).toBeLessThan(one.alpha);
    expect(one.upper).toBeGreaterThan(one.alpha);
    expect(one.upper).toBeLessThanOrEqual(1);
    expect(alphaBootstrap(SECTION_C, { rng: createRng(8) }).lower).not.toBe(one.lower);
  });

  it('narrows as units accumulate', () => {
    // Four copies of the table: the same alpha (coincidences scale), an interval about half as wide (√4).
    const four = [...SECTION_C, ...SECTION_C, ...SECTION_C, ...SECTION_C];
    const small = alphaBootstrap(SECTION_C, { rng: createRng(1) });
    const large = alphaBootstrap(four, { rng: createRng(1) });
    expect(Math.abs(large.alpha - small.alpha)).toBeLessThan(0.02);
    const ratio = (large.upper - large.lower) / (small.upper - small.lower);
    expect(ratio).toBeGreaterThan(0.35);
    expect(ratio).toBeLessThan(0.7);
  });

  it('percentile by linear interpolation (Hyndman & Fan definition 7)', () => {
    expect(sortedQuantile([1, 2, 3, 4, 5], 0.5)).toBe(3);
    expect(sortedQuantile([1, 2, 3, 4], 0.5)).toBe(2.5);
    expect(Math.abs(sortedQuantile([0, 10], 0.025) - 0.25)).toBeLessThan(1e-12);
  });

  it('rejects bad options', () => {
    expect(() => alphaBootstrap(SECTION_C, { rng: createRng(1), resamples: 0 })).toThrow(/resamples/);
    expect(() => alphaBootstrap(SECTION_C, { rng: createRng(1), confidence: 1 })).toThrow(/confidence/);
    expect(() => alphaBootstrap(SECTION_C, { rng: undefined as never })).toThrow(/rng/);
  });
});

import { describe, expect, it } from 'vitest';
import { cohenKappa, cohenKappaFromMatrix } from './cohen-kappa.js';

const TOL = 5e-5;

describe("Cohen's kappa", () => {
  it('Cohen (1960) Table 2', () => {
    // Cohen (1960), "A coefficient of agreement for nominal scales", Educ. Psychol. Meas. 20(1):37–46,
    // Table 2 [reproduced]: p_o = 0.70, p_e = 0.41, κ = 0.29/0.59 (printed .492).
    const r = cohenKappaFromMatrix([
      [88, 14, 18],
      [10, 40, 10],
      [2, 6, 12],
    ]);
    expect(r.n).toBe(200);
    expect(Math.abs(r.observed - 0.7)).toBeLessThan(TOL);
    expect(Math.abs(r.expected - 0.41)).toBeLessThan(TOL);
    expect(Math.abs(r.kappa - 0.491525)).toBeLessThan(TOL);
  });

  it('encyclopedia 2×2 examples', () => {
    // Wikipedia, "Cohen's kappa", worked example [reproduced]: κ = 0.4 exactly.
    expect(
      Math.abs(
        cohenKappaFromMatrix([
          [20, 5],
          [10, 15],
        ]).kappa - 0.4,
      ),
    ).toBeLessThan(TOL);
    // Same page, same agreement with different margins [memory for the provenance; values recomputed]: 3/23 and 7/27.
    expect(
      Math.abs(
        cohenKappaFromMatrix([
          [45, 15],
          [25, 15],
        ]).kappa - 0.130435,
      ),
    ).toBeLessThan(TOL);
    expect(
      Math.abs(
        cohenKappaFromMatrix([
          [25, 35],
          [5, 35],
        ]).kappa - 0.259259,
      ),
    ).toBeLessThan(TOL);
  });

  it('Artstein & Poesio (2008) Table 1', () => {
    // Artstein & Poesio (2008), Computational Linguistics 34(4), Table 1 [reproduced in scikit-learn's metric tests]: 8/23.
    expect(
      Math.abs(
        cohenKappaFromMatrix([
          [20, 20],
          [10, 50],
        ]).kappa - 0.347826,
      ),
    ).toBeLessThan(TOL);
  });

  it('SAS example of statsmodels (unweighted)', () => {
    // SAS output as reproduced in statsmodels' inter-rater tests [reproduced]: unweighted 0.4842 (printed to 4 places).
    expect(
      Math.abs(
        cohenKappaFromMatrix([
          [0, 4, 1],
          [0, 8, 0],
          [0, 1, 5],
        ]).kappa - 0.4842,
      ),
    ).toBeLessThan(5e-5);
  });

  it('paired labels give the same kappa as their confusion matrix', () => {
    // Expand the encyclopedia table [[20,5],[10,15]] (rows rater a) into label pairs: κ = 0.4.
    const a: string[] = [];
    const b: string[] = [];
    const push = (x: string, y: string, times: number) => {
      for (let i = 0; i < times; i++) {
        a.push(x);
        b.push(y);
      }
    };
    push('yes', 'yes', 20);
    push('yes', 'no', 5);
    push('no', 'yes', 10);
    push('no', 'no', 15);
    const r = cohenKappa(a, b);
    expect(r.n).toBe(50);
    expect(Math.abs(r.kappa - 0.4)).toBeLessThan(TOL);
    // Symmetric in the raters.
    expect(Math.abs(cohenKappa(b, a).kappa - 0.4)).toBeLessThan(TOL);
  });

  it('is undefined (NaN) when both raters used one category throughout', () => {
    expect(cohenKappa(['ok', 'ok'], ['ok', 'ok']).kappa).toBeNaN();
  });

  it('rejects bad input naming the argument', () => {
    expect(() => cohenKappaFromMatrix([[1, 2], [3]])).toThrow(/matrix is ragged/);
    expect(() =>
      cohenKappaFromMatrix([
        [1, 2, 3],
        [3, 4, 5],
      ]),
    ).toThrow(RangeError);
    expect(() =>
      cohenKappaFromMatrix([
        [1, -2],
        [3, 4],
      ]),
    ).toThrow(/matrix\[0\]\[1\].*-2/);
    expect(() =>
      cohenKappaFromMatrix([
        [0, 0],
        [0, 0],
      ]),
    ).toThrow(RangeError);
    expect(() => cohenKappaFromMatrix('x' as never)).toThrow(TypeError);
    expect(() => cohenKappa(['a'], ['a', 'b'])).toThrow(/same length/);
    expect(() => cohenKappa([], [])).toThrow(RangeError);
    expect(() => cohenKappa(['a', null as never], ['a', 'b'])).toThrow(/a\[1\]/);
  });
});

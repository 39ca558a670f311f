import { describe, expect, it } from 'vitest';
import { ppiMean, ppiTotal, ppiTunedLambda, summarizeScores } from './prediction-powered.js';

const TOL = 5e-5;
const close = (a: number, b: number, tol = TOL) => expect(Math.abs(a - b)).toBeLessThan(tol);

// Angelopoulos, Bates, Fannjiang, Jordan & Zrnic (2023), "Prediction-powered inference", Science 382:669–674
// [paper]; power tuning: Angelopoulos, Duchi & Zrnic (2023), "PPI++: Efficient prediction-powered inference",
// arXiv:2311.01453 [paper]. Example values computed with the papers' formulas in numpy/scipy and matching a
// run of the authors' library ppi_py (`ppi_mean_ci`) [reproduced].
const Y = [1, 0, 0, 1, 0, 0, 0, 0, 1, 0];
const f = [0.9, 0.2, 0.1, 0.6, 0.3, 0.1, 0.2, 0.05, 0.7, 0.4];
const fTilde = [0.8, 0.1, 0.05, 0.3, 0.2, 0.1, 0, 0.6, 0.15, 0.05, 0.9, 0.2, 0.1, 0.1, 0.3, 0.05, 0.7, 0.1, 0.2, 0.4];
const Z_90 = 1.6448536;

describe('prediction-powered mean', () => {
  it('reproduces the worked example with λ = 1 and λ = 0', () => {
    const ppi = ppiMean(Y, f, fTilde, { lambda: 1, z: Z_90 });
    close(ppi.estimate, 0.215);
    close(ppi.lower, 0.056568);
    close(ppi.upper, 0.373432);
    const classical = ppiMean(Y, f, fTilde, { lambda: 0, z: Z_90 });
    close(classical.estimate, 0.3);
    close(classical.lower, 0.061638);
    close(classical.upper, 0.538362);
  });

  it('tunes λ as PPI++ does and clips it to [0, 1]', () => {
    // λ̂ before clipping ≈ 1.04 → λ = 1, so the tuned interval is PPI's.
    expect(ppiTunedLambda(Y, f, summarizeScores(fTilde))).toBe(1);
    const tuned = ppiMean(Y, f, fTilde, { z: Z_90 });
    expect(tuned.lambda).toBe(1);
    close(tuned.lower, 0.056568);
    // Doubling every score halves Cov/Var: the unclipped 1.0401314 (ddof 0, numpy) becomes 0.5200657.
    close(
      ppiTunedLambda(
        Y,
        f.map((x) => 2 * x),
        summarizeScores(fTilde.map((x) => 2 * x)),
      ),
      0.5200657,
      1e-6,
    );
    // Scores that run against the labels give a negative covariance: clipped to 0.
    expect(
      ppiTunedLambda(
        Y,
        f.map((x) => 1 - x),
        summarizeScores(fTilde),
      ),
    ).toBe(0);
  });

  it('is exact in the degenerate case', () => {
    // From ppi_py's tests [reproduced]: scores f = Y + 2 and every unlabelled score 2, λ = 1 → θ̂ = 0 exactly.
    const labels = [3.5, -1, 0.25, 7];
    const est = ppiMean(
      labels,
      labels.map((y) => y + 2),
      [2, 2, 2, 2, 2],
      { lambda: 1 },
    );
    expect(est.estimate).toBe(0);
  });

  it('checks its inputs', () => {
    expect(() => ppiMean([1, 0], [0.5], [0.1])).toThrow(/differ in length/);
    expect(() => ppiMean([], [], [0.1])).toThrow(/at least one labelled/);
    expect(() => ppiMean([1], [Number.NaN], [0.1])).toThrow(/labelledScores\[0\]/);
    expect(() => ppiMean([1], [0.5], [], { lambda: 1 })).toThrow(/at least one score/);
    expect(() => ppiMean([1], [0.5], [0.2], { z: -1 })).toThrow(/options.z/);
  });
});

describe('prediction-powered total of a finite population', () => {
  it('has the point estimate N·θ̂ and adds each unlabelled residual’s variance', () => {
    const mean = ppiMean(Y, f, fTilde, { lambda: 1 });
    const total = ppiTotal(Y, f, { scored: summarizeScores(fTilde), unscored: 0 }, { lambda: 1 });
    close(total.estimate, 20 * mean.estimate, 1e-12);
    // Var = N²·Var_n(Y − f)/n + N·Var_n(Y − f) (Var_n(Y − f) = 0.058225, recomputed with numpy).
    const r = Y.map((y, i) => y - f[i]);
    const mr = r.reduce((s, x) => s + x, 0) / r.length;
    const vr = r.reduce((s, x) => s + (x - mr) ** 2, 0) / r.length;
    close(vr, 0.058225, 1e-9);
    close(total.standardError, Math.sqrt((400 * vr) / 10 + 20 * vr), 1e-12);
  });

  it('counts unscored items of the population with the labels alone', () => {
    // With no scored items the estimate is N_u·mean(Y) and the variance N_u²·Var(Y)/n + N_u·Var(Y).
    const t = ppiTotal(Y, f, { scored: summarizeScores([]), unscored: 50 });
    expect(t.lambda).toBe(0);
    close(t.estimate, 15, 1e-12);
    close(t.standardError, Math.sqrt((2500 * 0.21) / 10 + 50 * 0.21), 1e-12);
    // Mixed: the scored part is powered by the model, the unscored part is not.
    const mixed = ppiTotal(Y, f, { scored: summarizeScores(fTilde), unscored: 50 }, { lambda: 1 });
    const parts = 1 * fTilde.reduce((s, x) => s + x, 0) + 20 * (0.3 - 0.355) + 50 * 0.3;
    close(mixed.estimate, parts, 1e-12);
    expect(() => ppiTotal(Y, f, { scored: summarizeScores([]), unscored: -1 })).toThrow(/unscored/);
  });
});

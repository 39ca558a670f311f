import { describe, expect, it } from 'vitest';
import { minimizeLbfgs, type Objective } from './lbfgs.js';

describe('minimizeLbfgs', () => {
  it('finds the minimiser of a convex quadratic ½xᵀAx − bᵀx (the solution of Ax = b)', () => {
    // A = [[4, 1], [1, 3]], b = (1, 2): x* = A⁻¹b = (1/11, 7/11), worked by hand.
    const f: Objective = (x, g) => {
      g[0] = 4 * x[0] + x[1] - 1;
      g[1] = x[0] + 3 * x[1] - 2;
      return 0.5 * (4 * x[0] * x[0] + 2 * x[0] * x[1] + 3 * x[1] * x[1]) - x[0] - 2 * x[1];
    };
    const r = minimizeLbfgs(f, new Float64Array(2), { gradientTolerance: 1e-12 });
    expect(r.converged).toBe(true);
    expect(r.stop).toBe('gradient');
    expect(r.x[0]).toBeCloseTo(1 / 11, 11);
    expect(r.x[1]).toBeCloseTo(7 / 11, 11);
    expect(r.gradientNorm).toBeLessThanOrEqual(1e-12);
  });

  it("reaches the minimum (1, 1) of Rosenbrock's function from (−1.2, 1)", () => {
    // Rosenbrock (1960), The Computer Journal 3(3):175–184; the start (−1.2, 1) is the classic one
    // (Moré, Garbow & Hillstrom 1981, ACM TOMS 7(1), problem 1).
    const f: Objective = (x, g) => {
      const a = 1 - x[0];
      const b = x[1] - x[0] * x[0];
      g[0] = -2 * a - 400 * x[0] * b;
      g[1] = 200 * b;
      return a * a + 100 * b * b;
    };
    const x0 = Float64Array.of(-1.2, 1);
    const r = minimizeLbfgs(f, x0, { gradientTolerance: 1e-9, maxIterations: 500 });
    expect(r.converged).toBe(true);
    expect(r.x[0]).toBeCloseTo(1, 6);
    expect(r.x[1]).toBeCloseTo(1, 6);
    expect(Array.from(x0)).toEqual([-1.2, 1]);
    // Deterministic: the same start gives the same iterates.
    const again = minimizeLbfgs(f, x0, { gradientTolerance: 1e-9, maxIterations: 500 });
    expect(Array.from(again.x)).toEqual(Array.from(r.x));
    expect(again.evaluations).toBe(r.evaluations);
  });

  it('stops at the iteration cap and says it did not converge', () => {
    const f: Objective = (x, g) => {
      g[0] = 2 * x[0] * 1e-3 + 1;
      return 1e-3 * x[0] * x[0] + x[0];
    };
    const r = minimizeLbfgs(f, new Float64Array(1), { gradientTolerance: 0, maxIterations: 1 });
    expect(r.iterations).toBe(1);
    expect(r.converged).toBe(false);
    expect(r.stop).toBe('iterations');
  });

  it('rejects bad options', () => {
    const f: Objective = (x, g) => {
      g[0] = 2 * x[0];
      return x[0] * x[0];
    };
    const x0 = new Float64Array(1);
    expect(() => minimizeLbfgs(f, x0, { gradientTolerance: -1 })).toThrow(/gradientTolerance/);
    expect(() => minimizeLbfgs(f, x0, { gradientTolerance: 0, memory: 0 })).toThrow(/memory/);
    expect(() => minimizeLbfgs(f, x0, { gradientTolerance: 0, maxIterations: 1.5 })).toThrow(/maxIterations/);
    expect(() => minimizeLbfgs(() => Number.NaN, x0, { gradientTolerance: 0 })).toThrow(/not finite/);
  });
});

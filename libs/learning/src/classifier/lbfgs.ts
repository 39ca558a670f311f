/**
 * Limited-memory BFGS for smooth unconstrained minimisation.
 *
 * The method of Nocedal (1980), "Updating quasi-Newton matrices with limited
 * storage", Math. Comp. 35(151):773–782, in the form of Liu & Nocedal (1989),
 * "On the limited memory BFGS method for large scale optimization", Math.
 * Programming 45:503–528: the search direction is −H·g with H the BFGS
 * inverse-Hessian approximation built from the last `memory` pairs
 * (s, y) = (Δx, Δg) by the two-loop recursion, the initial matrix scaled by
 * sᵀy / yᵀy (Nocedal & Wright, Numerical Optimization, 2nd ed., 2006,
 * Algorithm 7.4 and eq. 7.20). The step length is found by backtracking from
 * 1 with safeguarded quadratic interpolation until the Armijo (sufficient
 * decrease) condition holds (Nocedal & Wright Algorithm 3.1 and §3.5); a pair
 * with non-positive curvature sᵀy is not stored, which keeps H positive
 * definite (Nocedal & Wright §6.1, "damping" by skipping).
 */

/** Writes the gradient at `x` into `gradient` and returns the objective value. */
export type Objective = (x: Float64Array, gradient: Float64Array) => number;

export interface LbfgsOptions {
  /** Stop when ‖∇f(x)‖₂ ≤ this (absolute). */
  gradientTolerance: number;
  /** Most iterations (default 1000). */
  maxIterations?: number;
  /** Correction pairs kept (default 10). */
  memory?: number;
  /** Armijo constant c₁ (default 1e-4). */
  sufficientDecrease?: number;
  /** Most trial steps per line search (default 40). */
  maxBacktracks?: number;
  /** The objective and its gradient at `x0`, when already computed (saves one evaluation). */
  start?: { value: number; gradient: Float64Array };
}

export interface LbfgsResult {
  x: Float64Array;
  value: number;
  gradientNorm: number;
  iterations: number;
  /** Objective-and-gradient evaluations, the first included (unless given as `start`). */
  evaluations: number;
  /** True when ‖∇f‖₂ reached the tolerance. */
  converged: boolean;
  /** Why it stopped. */
  stop: 'gradient' | 'iterations' | 'line-search';
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/**
 * Minimises `f` from `x0` (not modified) by L-BFGS, see the module comment.
 * Uses no random numbers: the same objective and start give the same result.
 *
 * @throws RangeError on bad options or a non-finite start.
 */
export function minimizeLbfgs(f: Objective, x0: Float64Array, options: LbfgsOptions): LbfgsResult {
  const tol = options.gradientTolerance;
  const maxIterations = options.maxIterations ?? 1000;
  const memory = options.memory ?? 10;
  const c1 = options.sufficientDecrease ?? 1e-4;
  const maxBacktracks = options.maxBacktracks ?? 40;
  if (!(tol >= 0)) throw new RangeError(`gradientTolerance must be ≥ 0, got ${tol}`);
  if (!Number.isInteger(maxIterations) || maxIterations < 0)
    throw new RangeError(`maxIterations must be a non-negative integer, got ${maxIterations}`);
  if (!Number.isInteger(memory) || memory < 1) throw new RangeError(`memory must be a positive integer, got ${memory}`);
  if (!(c1 > 0 && c1 < 1)) throw new RangeError(`sufficientDecrease must be in (0, 1), got ${c1}`);

  const n = x0.length;
  let x = Float64Array.from(x0);
  let g = new Float64Array(n);
  let value: number;
  if (options.start !== undefined) {
    if (options.start.gradient.length !== n)
      throw new RangeError(`start.gradient has ${options.start.gradient.length} entries for ${n} parameters`);
    value = options.start.value;
    g.set(options.start.gradient);
  } else value = f(x, g);
  let evaluations = options.start === undefined ? 1 : 0;
  if (!Number.isFinite(value)) throw new RangeError(`the objective is not finite at the start (${value})`);
  let gnorm = Math.sqrt(dot(g, g));

  // Correction pairs in a ring buffer of memory + 1 slots, each allocated once: pair p (0 = oldest) sits in
  // slot (head + p) % ring, and a new pair is written into the free slot after the newest before it is kept.
  const ring = memory + 1;
  const sList: (Float64Array | undefined)[] = [];
  const yList: (Float64Array | undefined)[] = [];
  const rhoList = new Float64Array(ring);
  let head = 0;
  let pairs = 0;
  const slot = (p: number): number => (head + p) % ring;
  const alpha = new Float64Array(memory);
  const d = new Float64Array(n);
  let xNew = new Float64Array(n);
  let gNew = new Float64Array(n);
  let iterations = 0;
  let stop: LbfgsResult['stop'];

  for (;;) {
    if (gnorm <= tol) {
      stop = 'gradient';
      break;
    }
    if (iterations >= maxIterations) {
      stop = 'iterations';
      break;
    }
    // Two-loop recursion: d = −H·g.
    for (let i = 0; i < n; i++) d[i] = -g[i];
    for (let p = pairs - 1; p >= 0; p--) {
      const q = slot(p);
      const a = rhoList[q] * dot(sList[q]!, d);
      alpha[p] = a;
      const y = yList[q]!;
      for (let i = 0; i < n; i++) d[i] -= a * y[i];
    }
    if (pairs > 0) {
      const last = slot(pairs - 1);
      const yLast = yList[last]!;
      const gamma = 1 / (rhoList[last] * dot(yLast, yLast));
      for (let i = 0; i < n; i++) d[i] *= gamma;
    }
    for (let p = 0; p < pairs; p++) {
      const q = slot(p);
      const b = rhoList[q] * dot(yList[q]!, d);
      const s = sList[q]!;
      const a = alpha[p];
      for (let i = 0; i < n; i++) d[i] += (a - b) * s[i];
    }
    let slope = dot(g, d);
    if (!(slope < 0)) {
      // Not a descent direction (rounding): restart from steepest descent.
      pairs = 0;
      for (let i = 0; i < n; i++) d[i] = -g[i];
      slope = -gnorm * gnorm;
    }
    // First iteration without curvature information: a step of length 1.
    let step = pairs === 0 ? 1 / gnorm : 1;
    let accepted = false;
    let valueNew = value;
    for (let trial = 0; trial < maxBacktracks; trial++) {
      for (let i = 0; i < n; i++) xNew[i] = x[i] + step * d[i];
      valueNew = f(xNew, gNew);
      evaluations++;
      if (Number.isFinite(valueNew) && valueNew <= value + c1 * step * slope) {
        accepted = true;
        break;
      }
      // Minimiser of the quadratic through f(0), f'(0) and f(step), kept within [0.1, 0.5]·step.
      const q = Number.isFinite(valueNew) ? (-slope * step * step) / (2 * (valueNew - value - slope * step)) : 0;
      step = Math.min(0.5 * step, Math.max(0.1 * step, q));
    }
    if (!accepted) {
      stop = 'line-search';
      break;
    }
    iterations++;
    const q = slot(pairs);
    const s = (sList[q] ??= new Float64Array(n));
    const y = (yList[q] ??= new Float64Array(n));
    let sy = 0;
    let ss = 0;
    let yy = 0;
    let gg = 0;
    for (let i = 0; i < n; i++) {
      const si = xNew[i] - x[i];
      const gi = gNew[i];
      const yi = gi - g[i];
      s[i] = si;
      y[i] = yi;
      sy += si * yi;
      ss += si * si;
      yy += yi * yi;
      gg += gi * gi;
    }
    if (sy > 1e-12 * Math.sqrt(ss * yy)) {
      rhoList[q] = 1 / sy;
      if (pairs < memory) pairs++;
      else head = (head + 1) % ring;
    }
    [x, xNew] = [xNew, x];
    [g, gNew] = [gNew, g];
    value = valueNew;
    gnorm = Math.sqrt(gg);
  }
  return { x, value, gradientNorm: gnorm, iterations, evaluations, converged: gnorm <= tol, stop };
}

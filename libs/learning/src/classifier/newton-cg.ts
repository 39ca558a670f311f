/**
 * Trust-region Newton method with conjugate gradients for smooth convex
 * minimisation: the method of Lin, Weng & Keerthi (2008), "Trust region
 * Newton method for large-scale logistic regression", JMLR 9:627–650
 * (Algorithm 1, the outer trust-region iteration of Lin & Moré 1999; and
 * Algorithm 2, Steihaug's 1983 conjugate gradient for the trust-region
 * subproblem), the primal solver of liblinear. Each outer iteration
 * approximately solves H·s = −g by CG, needing only Hessian-vector products,
 * stops CG when ‖H·s + g‖ ≤ ξ‖g‖ or the step reaches the trust-region
 * radius Δ, and accepts the step when the actual decrease is a fair share of
 * the quadratic model's prediction. Close to the optimum (a warm start after
 * a few more rows) one or two outer iterations suffice, where L-BFGS, which
 * starts without curvature pairs, needs a dozen.
 *
 * The radius update follows the paper's rule with its constants
 * η₀ = 10⁻⁴, η₁ = 0.25, η₂ = 0.75, σ₁ = 0.25, σ₂ = 0.5, σ₃ = 4, and the first
 * radius ‖∇f(x₀)‖ (constants as recalled from the paper and liblinear's
 * tron.cpp; the step-length interpolation α is liblinear's).
 */

/**
 * The objective at x: writes ∇f(x) into `gradient` and returns f(x). It also
 * records whatever the Hessian-vector product at x needs into `state`
 * (see {@link NewtonProblem}).
 */
export interface NewtonProblem {
  /** f and ∇f at x; the curvature data for x goes into `state`. */
  evaluate(x: Float64Array, gradient: Float64Array, state: Float64Array): number;
  /** out = ∇²f(x)·v, x being the point whose `state` is given. */
  hessianTimes(state: Float64Array, v: Float64Array, out: Float64Array): void;
  /** Length of the curvature `state`. */
  stateSize: number;
}

export interface NewtonOptions {
  /** Stop when ‖∇f(x)‖₂ ≤ this (absolute). */
  gradientTolerance: number;
  /** Most outer (Newton) iterations (default 1000). */
  maxIterations?: number;
  /** CG relative residual ξ (default 0.1). */
  cgTolerance?: number;
}

export interface NewtonResult {
  x: Float64Array;
  value: number;
  gradientNorm: number;
  /** Outer (Newton) iterations. */
  iterations: number;
  /** Objective-and-gradient evaluations, the first included. */
  evaluations: number;
  /** Hessian-vector products (CG iterations over all outer iterations). */
  hessianProducts: number;
  converged: boolean;
  stop: 'gradient' | 'iterations' | 'radius';
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/**
 * Minimises the problem's f from `x0` (not modified). Deterministic: no
 * random numbers, sums in a fixed order.
 *
 * @throws RangeError on bad options or a non-finite start.
 */
export function minimizeNewtonCg(problem: NewtonProblem, x0: Float64Array, options: NewtonOptions): NewtonResult {
  const tol = options.gradientTolerance;
  const maxIterations = options.maxIterations ?? 1000;
  const xi = options.cgTolerance ?? 0.1;
  if (!(tol >= 0)) throw new RangeError(`gradientTolerance must be ≥ 0, got ${tol}`);
  if (!Number.isInteger(maxIterations) || maxIterations < 0)
    throw new RangeError(`maxIterations must be a non-negative integer, got ${maxIterations}`);
  if (!(xi > 0 && xi < 1)) throw new RangeError(`cgTolerance must be in (0, 1), got ${xi}`);
  const eta0 = 1e-4;
  const eta1 = 0.25;
  const eta2 = 0.75;
  const sigma1 = 0.25;
  const sigma2 = 0.5;
  const sigma3 = 4;

  const n = x0.length;
  let x = Float64Array.from(x0);
  let g = new Float64Array(n);
  let state = new Float64Array(problem.stateSize);
  let value = problem.evaluate(x, g, state);
  let evaluations = 1;
  if (!Number.isFinite(value)) throw new RangeError(`the objective is not finite at the start (${value})`);
  let gnorm = Math.sqrt(dot(g, g));
  let delta = gnorm;
  let xNew = new Float64Array(n);
  let gNew = new Float64Array(n);
  let stateNew = new Float64Array(problem.stateSize);
  const s = new Float64Array(n);
  const r = new Float64Array(n);
  const d = new Float64Array(n);
  const hd = new Float64Array(n);
  let iterations = 0;
  let hessianProducts = 0;
  let stop: NewtonResult['stop'];

  for (;;) {
    if (gnorm <= tol) {
      stop = 'gradient';
      break;
    }
    if (iterations >= maxIterations) {
      stop = 'iterations';
      break;
    }
    if (!(delta > 1e-300)) {
      stop = 'radius';
      break;
    }
    // Steihaug's CG on min gᵀs + ½sᵀHs, ‖s‖ ≤ Δ (Lin, Weng & Keerthi 2008, Algorithm 2).
    s.fill(0);
    for (let i = 0; i < n; i++) r[i] = d[i] = -g[i];
    let rr = gnorm * gnorm;
    const cgTol = xi * gnorm;
    for (let cg = 0; cg < n && Math.sqrt(rr) > cgTol; cg++) {
      problem.hessianTimes(state, d, hd);
      hessianProducts++;
      const dHd = dot(d, hd);
      const alpha = dHd > 0 ? rr / dHd : Infinity;
      // Would the step leave the region (or is the curvature not positive)? Then stop on its boundary.
      let ss = 0;
      for (let i = 0; i < n; i++) {
        const t = s[i] + (Number.isFinite(alpha) ? alpha : 0) * d[i];
        ss += t * t;
      }
      if (!Number.isFinite(alpha) || ss > delta * delta) {
        const sd = dot(s, d);
        const dd = dot(d, d);
        const sNorm2 = dot(s, s);
        const rad = Math.sqrt(sd * sd + dd * (delta * delta - sNorm2));
        // τ ≥ 0 with ‖s + τd‖ = Δ (the root of the quadratic, written to avoid cancellation).
        const tau = sd >= 0 ? (delta * delta - sNorm2) / (sd + rad) : (rad - sd) / dd;
        for (let i = 0; i < n; i++) {
          s[i] += tau * d[i];
          r[i] -= tau * hd[i];
        }
        break;
      }
      for (let i = 0; i < n; i++) {
        s[i] += alpha * d[i];
        r[i] -= alpha * hd[i];
      }
      const rrNew = dot(r, r);
      const beta = rrNew / rr;
      for (let i = 0; i < n; i++) d[i] = r[i] + beta * d[i];
      rr = rrNew;
    }
    for (let i = 0; i < n; i++) xNew[i] = x[i] + s[i];
    const valueNew = problem.evaluate(xNew, gNew, stateNew);
    evaluations++;
    const gs = dot(g, s);
    // Predicted decrease −(gᵀs + ½sᵀHs) with Hs = −g − r.
    const predicted = -0.5 * (gs - dot(s, r));
    const actual = value - valueNew;
    const snorm = Math.sqrt(dot(s, s));
    if (iterations === 0) delta = Math.min(delta, snorm);
    const curvature = valueNew - value - gs;
    const alpha = curvature <= 0 ? sigma3 : Math.max(sigma1, -0.5 * (gs / curvature));
    if (!Number.isFinite(valueNew) || actual < eta0 * predicted) delta = Math.min(alpha * snorm, sigma2 * delta);
    else if (actual < eta1 * predicted) delta = Math.max(sigma1 * delta, Math.min(alpha * snorm, sigma2 * delta));
    else if (actual < eta2 * predicted) delta = Math.max(sigma1 * delta, Math.min(alpha * snorm, sigma3 * delta));
    else delta = Math.max(delta, Math.min(alpha * snorm, sigma3 * delta));
    iterations++;
    if (Number.isFinite(valueNew) && actual > eta0 * predicted) {
      [x, xNew] = [xNew, x];
      [g, gNew] = [gNew, g];
      [state, stateNew] = [stateNew, state];
      value = valueNew;
      gnorm = Math.sqrt(dot(g, g));
    }
  }
  return { x, value, gradientNorm: gnorm, iterations, evaluations, hessianProducts, converged: gnorm <= tol, stop };
}

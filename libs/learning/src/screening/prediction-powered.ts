import { Z_95 } from '../intervals/binomial-intervals.js';

/** Count, sum and sum of squares of a set of model scores: all that the estimators need of the unlabelled items. */
export interface ScoreSummary {
  count: number;
  sum: number;
  sumOfSquares: number;
}

/** An empty {@link ScoreSummary}, to fill with {@link addScore}. */
export function emptyScoreSummary(): ScoreSummary {
  return { count: 0, sum: 0, sumOfSquares: 0 };
}

/** Adds one score to a summary (in place). */
export function addScore(summary: ScoreSummary, score: number): void {
  summary.count++;
  summary.sum += score;
  summary.sumOfSquares += score * score;
}

/** The summary of a list of scores. */
export function summarizeScores(scores: ArrayLike<number>): ScoreSummary {
  const s = emptyScoreSummary();
  for (let i = 0; i < scores.length; i++) addScore(s, checkFinite(scores[i], `scores[${i}]`));
  return s;
}

function checkFinite(v: number, name: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) throw new RangeError(`${name} must be a finite number, got ${v}`);
  return v;
}

function checkSummary(s: ScoreSummary, name: string): void {
  if (!Number.isInteger(s.count) || s.count < 0)
    throw new RangeError(`${name}.count must be a non-negative integer, got ${s.count}`);
  checkFinite(s.sum, `${name}.sum`);
  checkFinite(s.sumOfSquares, `${name}.sumOfSquares`);
}

function checkLabelled(labels: ArrayLike<number>, scores: ArrayLike<number>): void {
  if (labels.length !== scores.length)
    throw new RangeError(`labels (${labels.length}) and labelledScores (${scores.length}) differ in length`);
  for (let i = 0; i < labels.length; i++) {
    checkFinite(labels[i], `labels[${i}]`);
    checkFinite(scores[i], `labelledScores[${i}]`);
  }
}

/** Population variance (ddof 0) from a summary; never negative. */
function varianceOf(s: ScoreSummary): number {
  if (s.count === 0) return 0;
  const mean = s.sum / s.count;
  return Math.max(0, s.sumOfSquares / s.count - mean * mean);
}

function mean(xs: ArrayLike<number>): number {
  let t = 0;
  for (let i = 0; i < xs.length; i++) t += xs[i];
  return xs.length ? t / xs.length : 0;
}

/** Population variance (ddof 0), two-pass. */
function variance(xs: ArrayLike<number>): number {
  const m = mean(xs);
  let t = 0;
  for (let i = 0; i < xs.length; i++) t += (xs[i] - m) ** 2;
  return xs.length ? t / xs.length : 0;
}

/**
 * The power-tuned weight of PPI++ for a mean (Angelopoulos, Duchi & Zrnic
 * 2023, "PPI++: Efficient prediction-powered inference", arXiv:2311.01453):
 * λ̂ = Cov_n(Y, f) / ((1 + n/N)·Var_{n+N}(f)), population (co)variances,
 * clipped to [0, 1]. 0 when the scores do not vary (λ then changes nothing)
 * or there are no unlabelled scores.
 */
export function ppiTunedLambda(
  labels: ArrayLike<number>,
  labelledScores: ArrayLike<number>,
  unlabelled: ScoreSummary,
): number {
  checkLabelled(labels, labelledScores);
  checkSummary(unlabelled, 'unlabelled');
  const n = labels.length;
  const N = unlabelled.count;
  if (n === 0 || N === 0) return 0;
  const my = mean(labels);
  const mf = mean(labelledScores);
  let cov = 0;
  for (let i = 0; i < n; i++) cov += (labels[i] - my) * (labelledScores[i] - mf);
  cov /= n;
  const all = summarizeScores(labelledScores);
  const pooled: ScoreSummary = {
    count: n + N,
    sum: all.sum + unlabelled.sum,
    sumOfSquares: all.sumOfSquares + unlabelled.sumOfSquares,
  };
  const v = varianceOf(pooled);
  if (!(v > 0)) return 0;
  return Math.min(1, Math.max(0, cov / ((1 + n / N) * v)));
}

/** A prediction-powered point estimate with its normal-theory interval. */
export interface PpiEstimate {
  estimate: number;
  lower: number;
  upper: number;
  standardError: number;
  /** The weight of the model's scores: 1 is PPI, 0 the classical estimate from the labels alone. */
  lambda: number;
  /** Labelled items. */
  n: number;
  /** Unlabelled items with a score. */
  N: number;
}

export interface PpiOptions {
  /** A fixed weight, or `tuned` (PPI++, the default). */
  lambda?: number | 'tuned';
  /** z of the two-sided interval (default 1.959963985, 95 %). */
  z?: number;
}

function lambdaOf(
  options: PpiOptions,
  labels: ArrayLike<number>,
  labelledScores: ArrayLike<number>,
  unlabelled: ScoreSummary,
): number {
  const l = options.lambda ?? 'tuned';
  if (l === 'tuned') return ppiTunedLambda(labels, labelledScores, unlabelled);
  if (typeof l !== 'number' || !Number.isFinite(l))
    throw new RangeError(`options.lambda must be a finite number or "tuned", got ${String(l)}`);
  return l;
}

function zOf(options: PpiOptions): number {
  const z = options.z ?? Z_95;
  if (!(z > 0) || !Number.isFinite(z)) throw new RangeError(`options.z must be a positive finite number, got ${z}`);
  return z;
}

/**
 * Prediction-powered estimate of a mean E[Y] over a population of which n
 * items are labelled (labels Y, model scores f) and N are not (scores f̃),
 * all drawn from the same distribution (Angelopoulos, Bates, Fannjiang,
 * Jordan & Zrnic 2023, "Prediction-powered inference", Science 382:669–674;
 * power-tuned: Angelopoulos, Duchi & Zrnic 2023, arXiv:2311.01453):
 * θ̂_λ = λ·mean(f̃) + mean(Y − λ·f), standard error
 * √(λ²·Var_N(f̃)/N + Var_n(Y − λ·f)/n) with population variances, interval
 * θ̂ ± z·se. λ = 1 is PPI, λ = 0 the classical mean of the labels.
 *
 * @param unlabelled the unlabelled scores, or their {@link ScoreSummary}
 */
export function ppiMean(
  labels: ArrayLike<number>,
  labelledScores: ArrayLike<number>,
  unlabelled: ArrayLike<number> | ScoreSummary,
  options: PpiOptions = {},
): PpiEstimate {
  checkLabelled(labels, labelledScores);
  const u = 'count' in unlabelled ? unlabelled : summarizeScores(unlabelled);
  checkSummary(u, 'unlabelled');
  const n = labels.length;
  const N = u.count;
  if (n === 0) throw new RangeError('labels must hold at least one labelled item');
  const lambda = lambdaOf(options, labels, labelledScores, u);
  if (N === 0 && lambda !== 0) throw new RangeError('unlabelled must hold at least one score when lambda ≠ 0');
  const z = zOf(options);
  const residuals = Float64Array.from({ length: n }, (_, i) => labels[i] - lambda * labelledScores[i]);
  const estimate = (N > 0 ? lambda * (u.sum / N) : 0) + mean(residuals);
  const standardError = Math.sqrt((N > 0 ? (lambda * lambda * varianceOf(u)) / N : 0) + variance(residuals) / n);
  return {
    estimate,
    lower: estimate - z * standardError,
    upper: estimate + z * standardError,
    standardError,
    lambda,
    n,
    N,
  };
}

/** A finite population whose total is to be estimated: its items with a model score, and those without. */
export interface UnlabelledPopulation {
  scored: ScoreSummary;
  /** Items of the population that have no model score. */
  unscored: number;
}

/**
 * Prediction-powered estimate of the total T = Σ Y_i over a finite
 * population of unlabelled items (N_s with a model score, N_u without),
 * from n labelled items drawn from the same distribution. The point estimate
 * is the PPI one, T̂ = λ·Σf̃ + mean_n(N_s·(Y − λ·f) + N_u·Y), which with
 * N_u = 0 is N·θ̂_λ (Angelopoulos et al. 2023). Its error against the total
 * the population actually holds is
 * N_s·(r̄ − μ_r) + N_u·(ȳ − μ_Y) − Σ_i (rᵢ − μ) over the population, so
 * Var(T̂ − T) = Var_n(N_s·r + N_u·Y)/n + N_s·Var(r) + N_u·Var(Y), with
 * r = Y − λ·f (the difference estimator of survey sampling; Särndal,
 * Swensson & Wretman 1992, "Model Assisted Survey Sampling", §6.3): the
 * model's share Σf̃ is known exactly, and each unlabelled item adds its own
 * residual's variance. λ is PPI++'s tuned weight over the scored items by
 * default.
 */
export function ppiTotal(
  labels: ArrayLike<number>,
  labelledScores: ArrayLike<number>,
  population: UnlabelledPopulation,
  options: PpiOptions = {},
): PpiEstimate {
  checkLabelled(labels, labelledScores);
  checkSummary(population.scored, 'population.scored');
  const Nu = population.unscored;
  if (!Number.isInteger(Nu) || Nu < 0)
    throw new RangeError(`population.unscored must be a non-negative integer, got ${Nu}`);
  const n = labels.length;
  if (n === 0) throw new RangeError('labels must hold at least one labelled item');
  const Ns = population.scored.count;
  const lambda = Ns === 0 ? 0 : lambdaOf(options, labels, labelledScores, population.scored);
  const z = zOf(options);
  const r = Float64Array.from({ length: n }, (_, i) => labels[i] - lambda * labelledScores[i]);
  const terms = Float64Array.from({ length: n }, (_, i) => Ns * r[i] + Nu * labels[i]);
  const estimate = lambda * population.scored.sum + mean(terms);
  const standardError = Math.sqrt(variance(terms) / n + Ns * variance(r) + Nu * variance(labels));
  return {
    estimate,
    lower: estimate - z * standardError,
    upper: estimate + z * standardError,
    standardError,
    lambda,
    n,
    N: Ns,
  };
}

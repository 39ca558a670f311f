import { assertCountTable } from './count-checks.js';

/** Fleiss' kappa, overall and per category, with the figures behind it. */
export interface FleissKappa {
  /** (P̄ − P̄e) / (1 − P̄e); NaN when P̄e = 1. */
  kappa: number;
  /** Mean observed agreement P̄ over subjects. */
  observed: number;
  /** Chance agreement P̄e = Σ_j p_j². */
  expected: number;
  /** κ_j per category (NaN for a category nobody or everybody used: p_j q_j = 0). */
  perCategory: number[];
  /** p_j: the share of all assignments that went to category j. */
  proportions: number[];
  subjects: number;
  /** Ratings per subject (the same for every subject). */
  raters: number;
}

/**
 * Fleiss' kappa (Fleiss 1971, "Measuring nominal scale agreement among many
 * raters", Psychol. Bull. 76(5), eqs. 2–9) from per-subject category counts:
 * `counts[i][j]` raters put subject i in category j, every subject rated by
 * the same number n ≥ 2 of raters. p_j = Σ_i n_ij / (N n);
 * P_i = (Σ_j n_ij² − n) / (n (n − 1)); κ = (P̄ − P̄e) / (1 − P̄e) with
 * P̄e = Σ_j p_j²; per category κ_j = 1 − Σ_i n_ij (n − n_ij) / (N n (n − 1) p_j q_j).
 */
export function fleissKappa(counts: readonly (readonly number[])[]): FleissKappa {
  const k = assertCountTable(counts, 'counts', 1, 2);
  const raters = counts[0].reduce((s, v) => s + v, 0);
  counts.forEach((row, i) => {
    const total = row.reduce((s, v) => s + v, 0);
    if (total !== raters)
      throw new RangeError(
        `counts[${i}] sums to ${total} ratings, but counts[0] to ${raters}: every subject needs the same number of raters`,
      );
  });
  if (raters < 2) throw new RangeError(`each subject needs at least two raters, got ${raters}`);
  const subjects = counts.length;
  const totals = new Float64Array(k);
  const disagreement = new Float64Array(k);
  let observedSum = 0;
  for (const row of counts) {
    let squares = 0;
    for (let j = 0; j < k; j++) {
      const v = row[j];
      totals[j] += v;
      squares += v * v;
      disagreement[j] += v * (raters - v);
    }
    observedSum += (squares - raters) / (raters * (raters - 1));
  }
  const proportions = Array.from(totals, (t) => t / (subjects * raters));
  const observed = observedSum / subjects;
  const expected = proportions.reduce((s, p) => s + p * p, 0);
  const perCategory = proportions.map((p, j) => {
    const pq = p * (1 - p);
    return pq === 0 ? Number.NaN : 1 - disagreement[j] / (subjects * raters * (raters - 1) * pq);
  });
  return {
    kappa: expected === 1 ? Number.NaN : (observed - expected) / (1 - expected),
    observed,
    expected,
    perCategory,
    proportions,
    subjects,
    raters,
  };
}

/**
 * LAC nonconformity score s(x, y) = 1 − p̂(y | x) ("least ambiguous set-valued
 * classifier", Sadinle, Lei & Wasserman 2019; the score of Angelopoulos &
 * Bates 2021, §1). Inputs are checked by the callers at the public boundary.
 */
export function lacScore(p: ArrayLike<number>, y: number): number {
  return 1 - p[y];
}

/**
 * Categories ordered by descending probability; ties keep category order, so
 * the ranking (and so APS) is deterministic.
 */
export function rankByProbability(p: ArrayLike<number>): Int32Array {
  const order = Int32Array.from({ length: p.length }, (_, i) => i);
  return order.sort((a, b) => p[b] - p[a] || a - b);
}

/**
 * APS score (Romano, Sesia & Candès 2020, "Classification with Valid and
 * Adaptive Coverage"): with probabilities sorted in descending order and
 * Z_c = p₍₁₎ + … + p₍c₎, r the rank of y, the non-randomised score is Z_r and
 * the randomised score is Z_(r−1) + U·p_y, U ~ Uniform(0, 1) drawn from `u`
 * (pass `u` to randomise; by default the non-randomised score is used).
 */
export function apsScore(p: ArrayLike<number>, y: number, u?: number): number {
  const order = rankByProbability(p);
  let before = 0;
  for (let r = 0; r < order.length; r++) {
    const c = order[r];
    if (c === y) return u === undefined ? before + p[c] : before + u * p[c];
    before += p[c];
  }
  throw new RangeError(`y must be a category index in 0…${p.length - 1}, got ${y}`);
}

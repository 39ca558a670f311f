import { cosineSimilarity, type SparseVector } from '../features/sparse-vector.js';
import type { Rng } from '../random/rng.js';
import { uncertainty, type UncertaintyStrategy } from './uncertainty-scores.js';

export interface BatchCandidate {
  /** The caller's handle for the item (returned as is). */
  id: number;
  /** Current predicted probabilities (needed for uncertainty draws). */
  probabilities: ArrayLike<number>;
  /** The item's feature vector, for the cosine near-duplicate check. */
  vector?: SparseVector;
  /** {@link normalizedTextHash} of its text, for the exact-duplicate check. */
  textHash?: number;
}

export type BatchDraw = 'uncertainty' | 'random';

export interface BatchPick {
  id: number;
  draw: BatchDraw;
  /** Uncertainty under the strategy (higher = more uncertain). */
  uncertainty: number;
}

export interface BatchOptions {
  size: number;
  /** Share of random draws, 0…1 (the service's default is 0.2). */
  randomShare: number;
  /** `random` makes every draw random. */
  strategy: UncertaintyStrategy | 'random';
  rng: Rng;
  /** Cosine at or above which an item counts as a near-duplicate (default 0.95). */
  duplicateCosine?: number;
}

/**
 * Picks a batch: ⌊size·share⌋ random draws, plus one more with probability
 * equal to the fractional part (so the expected share is exact), uniform
 * over the candidates; the rest by uncertainty sampling (Lewis & Gale 1994;
 * Settles 2009, §3.1), most uncertain first, skipping any candidate that
 * duplicates an item already in the batch (same normalised-text hash, or
 * cosine ≥ `duplicateCosine`).
 *
 * Random draws are not screened for duplicates: they calibrate the
 * conformal sets and must stay a uniform sample of the pool.
 *
 * @returns picks in draw order (random first); fewer than `size` only if the
 * candidates run out.
 */
export function pickBatch(candidates: readonly BatchCandidate[], options: BatchOptions): BatchPick[] {
  const { size, randomShare, strategy, rng } = options;
  const duplicateCosine = options.duplicateCosine ?? 0.95;
  if (!Number.isInteger(size) || size < 0) throw new RangeError(`size must be a non-negative integer, got ${size}`);
  if (!(randomShare >= 0 && randomShare <= 1))
    throw new RangeError(`randomShare must be in [0, 1], got ${randomShare}`);
  if (!(duplicateCosine > 0 && duplicateCosine <= 1))
    throw new RangeError(`duplicateCosine must be in (0, 1], got ${duplicateCosine}`);
  if (!['random', 'entropy', 'margin', 'least-confidence'].includes(strategy)) {
    throw new RangeError(`strategy must be entropy, margin, least-confidence or random, got ${strategy}`);
  }
  const target = Math.min(size, candidates.length);
  let randomCount = target;
  if (strategy !== 'random') {
    const exact = target * randomShare;
    randomCount = Math.floor(exact);
    if (rng.next() < exact - randomCount) randomCount++;
  }
  const taken = new Uint8Array(candidates.length);
  const picks: BatchPick[] = [];
  const score = (c: BatchCandidate): number => (strategy === 'random' ? 0 : uncertainty(c.probabilities, strategy));

  // Random draws: a partial Fisher–Yates shuffle over candidate positions.
  const order = Int32Array.from({ length: candidates.length }, (_, i) => i);
  for (let i = 0; i < randomCount; i++) {
    const j = i + Math.floor(rng.next() * (order.length - i));
    const t = order[i];
    order[i] = order[j];
    order[j] = t;
    const c = candidates[order[i]];
    taken[order[i]] = 1;
    picks.push({ id: c.id, draw: 'random', uncertainty: score(c) });
  }
  if (picks.length >= target) return picks;

  const scored = candidates.map((c, i) => ({ i, u: taken[i] ? -Infinity : score(c) }));
  scored.sort((a, b) => b.u - a.u || a.i - b.i);
  const hashes = new Set<number>();
  for (const p of picks) {
    const h = candidates.find((c) => c.id === p.id)?.textHash;
    if (h !== undefined) hashes.add(h);
  }
  const vectors: SparseVector[] = picks
    .map((p) => candidates.find((c) => c.id === p.id)?.vector)
    .filter((v): v is SparseVector => v !== undefined);
  for (const { i, u } of scored) {
    if (picks.length >= target) break;
    if (taken[i]) continue;
    const c = candidates[i];
    if (c.textHash !== undefined && hashes.has(c.textHash)) continue;
    if (c.vector !== undefined && vectors.some((v) => cosineSimilarity(v, c.vector!) >= duplicateCosine)) continue;
    taken[i] = 1;
    picks.push({ id: c.id, draw: 'uncertainty', uncertainty: u });
    if (c.textHash !== undefined) hashes.add(c.textHash);
    if (c.vector !== undefined) vectors.push(c.vector);
  }
  return picks;
}

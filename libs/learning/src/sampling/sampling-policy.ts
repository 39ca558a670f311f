import { cosineSimilarity, type SparseVector } from '../features/sparse-vector.js';
import { entropy, leastConfidence, margin } from '../uncertainty/uncertainty-scores.js';

/**
 * The sampling policy of a desk: which item a reviewer is served next. One
 * module, used by the lease service (which fetches the candidates with SQL
 * and asks this module what to take) and by the rehearsal (which simulates
 * the desk on labelled data with the same rules). Pure: no database, no
 * clock, no random numbers of its own (the caller passes its uniform draws).
 *
 * One lease:
 * 1. one uniform number u chooses the kind of draw ({@link drawKindOf}):
 *    `random` below the random share, before the first version `seed` (the
 *    cold start), the review lane `screen` up to random share + screen
 *    share when a category is watched, `uncertainty` above;
 * 2. the kind's sources are tried in order ({@link drawPlan}) until one has
 *    an item: the review lane falls back to uncertainty, uncertainty and the
 *    seed-term cold start to a uniform draw;
 * 3. each source orders its candidates: uncertainty by {@link priorityOf}
 *    under the desk's strategy, skipping a near-duplicate of the item the
 *    reviewer was served last ({@link avoidNearDuplicate}); the review lane
 *    by {@link screenPriority}; the cold start by seed-term matches; the
 *    uniform draw by the items' random keys ({@link uniformPick}).
 *
 * Ties in every order go to the newest item (the highest id).
 */

/** Strategies of uncertainty sampling a desk can use (Settles 2009, §3.1). */
export type SamplingStrategy = 'entropy' | 'margin' | 'least-confidence' | 'set-size';
export const SAMPLING_STRATEGIES: readonly SamplingStrategy[] = ['entropy', 'margin', 'least-confidence', 'set-size'];

/** What a lease records as the reason an item was served (the first draws; second opinions are the service's). */
export type PolicyDraw = 'random' | 'seed' | 'screen' | 'uncertainty';

/** Where an item is looked for: the order of one kind of candidates. */
export type DrawSource = 'screen' | 'uncertainty' | 'seed' | 'uniform';

export interface DrawStep {
  source: DrawSource;
  /** What the lease records when this source gives the item. */
  records: PolicyDraw;
}

export interface LaneShares {
  /** Share of uniform random draws (they calibrate), 0…1. */
  randomShare: number;
  /** Share of the review lane, 0…1 − randomShare. */
  screenShare: number;
}

export interface DeskState {
  /** A version is published (otherwise the cold start serves). */
  hasModel: boolean;
  /** The review lane is open: a version exists and at least one category is watched. */
  laneOpen: boolean;
}

/** Cosine of tf-idf vectors at or above which an item counts as a near-duplicate of the last one served. */
export const NEAR_DUPLICATE_COSINE = 0.95;
/** How many of the most uncertain items are looked at for one that is not a near-duplicate. */
export const NEAR_DUPLICATE_CANDIDATES = 5;

function checkShares(shares: LaneShares): void {
  const { randomShare, screenShare } = shares;
  if (!(randomShare >= 0 && randomShare <= 1))
    throw new RangeError(`randomShare must be in [0, 1], got ${randomShare}`);
  if (!(screenShare >= 0 && screenShare <= 1))
    throw new RangeError(`screenShare must be in [0, 1], got ${screenShare}`);
  if (randomShare + screenShare > 1 + 1e-12)
    throw new RangeError(`randomShare + screenShare must be at most 1, got ${randomShare + screenShare}`);
}

/**
 * The kind of a lease's first draw from one uniform number u ∈ [0, 1):
 * `random` when u < randomShare (whatever the desk's state, so the random
 * draws stay a uniform sample over time); `seed` before the first version;
 * `screen` when u < randomShare + screenShare and the lane is open;
 * `uncertainty` otherwise.
 */
export function drawKindOf(u: number, shares: LaneShares, state: DeskState): PolicyDraw {
  checkShares(shares);
  if (!(u >= 0 && u < 1)) throw new RangeError(`u must be in [0, 1), got ${u}`);
  if (u < shares.randomShare) return 'random';
  if (!state.hasModel) return 'seed';
  if (state.laneOpen && u < shares.randomShare + shares.screenShare) return 'screen';
  return 'uncertainty';
}

/**
 * The sources tried, in order, for a draw of `kind`, and what each records.
 * The review lane, once empty (every flagged item decided or held), falls
 * back to uncertainty, recorded as such; uncertainty and the cold start end
 * with a uniform draw that keeps their name: a cold-start verdict trains the
 * first model (which otherwise could not appear on a desk without seed
 * terms), and only `random` draws calibrate. `hasSeeds` false skips the
 * seed-term source.
 */
export function drawPlan(kind: PolicyDraw, hasSeeds = true): DrawStep[] {
  switch (kind) {
    case 'random':
      return [{ source: 'uniform', records: 'random' }];
    case 'seed':
      return [
        ...(hasSeeds ? [{ source: 'seed' as const, records: 'seed' as const }] : []),
        { source: 'uniform', records: 'seed' },
      ];
    case 'uncertainty':
      return [
        { source: 'uncertainty', records: 'uncertainty' },
        { source: 'uniform', records: 'uncertainty' },
      ];
    case 'screen':
      return [
        { source: 'screen', records: 'screen' },
        { source: 'uncertainty', records: 'uncertainty' },
        { source: 'uniform', records: 'uncertainty' },
      ];
  }
}

/**
 * Serving priority of an item (higher is served first) under a strategy
 * (Settles 2009, §3.1): entropy; 1 − margin (a small margin is uncertain);
 * least confidence; or the prediction-set size first, entropy (scaled below
 * 1) breaking ties.
 */
export function priorityOf(p: ArrayLike<number>, strategy: SamplingStrategy, setSize: number): number {
  switch (strategy) {
    case 'entropy':
      return entropy(p);
    case 'margin':
      return 1 - margin(p);
    case 'least-confidence':
      return leastConfidence(p);
    case 'set-size':
      return setSize + entropy(p) / Math.log(Math.max(2, p.length)) / 1.0001;
    default:
      throw new RangeError(`strategy must be one of ${SAMPLING_STRATEGIES.join(', ')}, got ${String(strategy)}`);
  }
}

/**
 * Review-lane priority of an item: its highest probability of a watched
 * category when its prediction set holds a watched category (it is
 * flagged), null when it is not flagged.
 */
export function screenPriority(
  p: ArrayLike<number>,
  set: readonly number[],
  watched: readonly number[],
): number | null {
  if (!set.some((c) => watched.includes(c))) return null;
  let best = -Infinity;
  for (const c of watched) if (p[c] > best) best = p[c];
  return best;
}

/** Higher priority first, ties by newest (higher id) first: the order of every ranked source. */
export function byPriority(a: { id: number; priority: number }, b: { id: number; priority: number }): number {
  return b.priority - a.priority || b.id - a.id;
}

/**
 * Among candidates in serving order (the most uncertain first, at most
 * {@link NEAR_DUPLICATE_CANDIDATES} looked at by the caller), the first that
 * is not a near-duplicate (cosine ≥ `cosine`) of the item served last to
 * the same reviewer; the first candidate when all are, or when there is no
 * previous item. Undefined only for no candidates.
 */
export function avoidNearDuplicate<T>(
  candidates: readonly T[],
  vectorOf: (c: T) => SparseVector,
  previous: SparseVector | null,
  cosine = NEAR_DUPLICATE_COSINE,
): T | undefined {
  if (!(cosine > 0 && cosine <= 1)) throw new RangeError(`cosine must be in (0, 1], got ${cosine}`);
  if (candidates.length === 0) return undefined;
  if (previous === null || candidates.length === 1) return candidates[0];
  return candidates.find((c) => cosineSimilarity(vectorOf(c), previous) < cosine) ?? candidates[0];
}

/**
 * A uniform draw: the first item whose random key is at or after r, wrapping
 * around to the smallest key. Keys are given to items independently of their
 * content, once, so the drawn item is distributed as the open items are
 * (what calibration needs). Ties by key go to the lower id.
 */
export function uniformPick<T extends { id: number; randKey: number }>(items: readonly T[], r: number): T | undefined {
  let after: T | undefined;
  let first: T | undefined;
  for (const it of items) {
    if (first === undefined || it.randKey < first.randKey || (it.randKey === first.randKey && it.id < first.id))
      first = it;
    if (
      it.randKey >= r &&
      (after === undefined || it.randKey < after.randKey || (it.randKey === after.randKey && it.id < after.id))
    )
      after = it;
  }
  return after ?? first;
}

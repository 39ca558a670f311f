import { predictionSet, type CalibrationMode, type ConformalCalibration, type NonconformityScore } from '#learning';
import type { PoolSection } from '../report-figures.js';

/**
 * Set sizes and triage calls over the pool: each stored probability vector
 * turned into its prediction set at the given target, mode and score — the
 * same sets reviewers were shown and the coverage preview counts.
 */
export function poolFigures(
  probabilities: Iterable<ArrayLike<number>>,
  calibration: ConformalCalibration,
  options: { target: number; mode: CalibrationMode; score: NonconformityScore },
): PoolSection {
  const k = calibration.categories.length;
  const sizes = new Array<number>(k + 1).fill(0);
  const calls = { sure: 0, ambiguous: 0, unfamiliar: 0 };
  let n = 0;
  let total = 0;
  for (const p of probabilities) {
    const set = predictionSet(p, calibration, { alpha: 1 - options.target, score: options.score, mode: options.mode });
    sizes[set.categories.length]++;
    calls[set.call]++;
    total += set.categories.length;
    n++;
  }
  const share = (x: number) => (n ? x / n : 0);
  return {
    items: n,
    meanSetSize: share(total),
    setSizes: sizes.map((items, size) => ({ size, items, share: share(items) })),
    calls: {
      sure: { items: calls.sure, share: share(calls.sure) },
      ambiguous: { items: calls.ambiguous, share: share(calls.ambiguous) },
      unfamiliar: { items: calls.unfamiliar, share: share(calls.unfamiliar) },
    },
  };
}

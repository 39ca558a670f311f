import type { DeskEntity } from '#database';
import type { PredictionSetOptions } from '#learning';

/** The settings of a desk that decide its prediction sets. */
export type SetSettings = Pick<
  DeskEntity,
  'coverageTarget' | 'coverageTargets' | 'calibration' | 'score' | 'confidence' | 'watch'
>;

/** The coverage target of each category (in the model's order): its own, else the desk's (or `target`). */
export function targetsOf(desk: SetSettings, categories: readonly string[], target = desk.coverageTarget): number[] {
  return categories.map((c) => desk.coverageTargets[c] ?? target);
}

/**
 * The options of the prediction sets of a desk under a model whose
 * categories are `categories`: each category's own miscoverage under
 * per-category calibration, the desk's confidence, and the watched
 * categories' thresholds read without the estimation fold (so that whether a
 * held-out item is cleared does not depend on its own label; see
 * `inEstimationFold`). `target` replaces the desk-wide target (previews);
 * categories with a target of their own keep it.
 */
export function setOptionsOf(
  desk: SetSettings,
  categories: readonly string[],
  target = desk.coverageTarget,
): PredictionSetOptions {
  if (desk.calibration === 'marginal') {
    // The desks service refuses per-category targets and watched categories on a marginal desk.
    return { alpha: 1 - target, score: desk.score, mode: 'marginal', confidence: desk.confidence };
  }
  const alpha = targetsOf(desk, categories, target).map((t) => 1 - t);
  const holdOut = categories.flatMap((c, i) => (desk.watch.includes(c) ? [i] : []));
  return { alpha, score: desk.score, mode: 'per-category', confidence: desk.confidence, holdOut };
}

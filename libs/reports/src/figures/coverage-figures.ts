import { clopperPearsonInterval, wilsonInterval } from '#learning';
import type { AlertEpisode, AlertSection, CoverageFigure } from '../report-figures.js';

/** One random check: a verdict on a uniform draw, compared with the set shown with it. */
export interface RandomCheck {
  at: Date;
  category: string;
  covered: boolean;
}

/** Random checks per alert window: the coverage page's window (PredictionsService.coverage). */
export const ALERT_WINDOW = 200;

/** Realized coverage of `checks` with its Wilson and Clopper–Pearson 95 % intervals (Newcombe 1998, methods 3 and 5). */
export function coverageFigure(checks: readonly RandomCheck[]): CoverageFigure {
  const n = checks.length;
  const x = checks.filter((c) => c.covered).length;
  if (n === 0) return { checks: 0, covered: 0, coverage: null, wilson: null, clopperPearson: null };
  return {
    checks: n,
    covered: x,
    coverage: x / n,
    wilson: wilsonInterval(x, n),
    clopperPearson: clopperPearsonInterval(x, n),
  };
}

/**
 * Replays the coverage alert over the period: after each check of the period,
 * the last `window` checks (earlier ones included) raise it when even their
 * Wilson upper bound is below the target in force at that moment — the rule
 * of the coverage page. Returns the episodes that began or lasted in the period.
 *
 * @param all every random check up to the period's end, oldest first
 * @param from checks after this time belong to the period
 */
export function alertEpisodes(
  all: readonly RandomCheck[],
  from: Date,
  targetAt: (t: Date) => number,
  window = ALERT_WINDOW,
): AlertSection {
  if (!Number.isInteger(window) || window < 1) throw new RangeError(`window must be a positive integer, got ${window}`);
  const episodes: AlertEpisode[] = [];
  let open: AlertEpisode | null = null;
  let hits = 0;
  for (let i = 0; i < all.length; i++) {
    if (all[i].covered) hits++;
    if (i >= window && all[i - window].covered) hits--;
    const n = Math.min(window, i + 1);
    const target = targetAt(all[i].at);
    const raised = wilsonInterval(hits, n).upper < target;
    const inPeriod = all[i].at.getTime() > from.getTime();
    if (raised && !open) {
      open = {
        raisedAt: all[i].at.toISOString(),
        clearedAt: null,
        checks: n,
        coverage: hits / n,
        upper: wilsonInterval(hits, n).upper,
        target,
      };
      // An alert raised before the period and still on when it starts is part of it too.
      episodes.push(open);
    } else if (!raised && open) {
      open.clearedAt = all[i].at.toISOString();
      open = null;
    }
    if (!inPeriod && !open) episodes.length = 0;
    else if (!inPeriod && open) episodes.splice(0, episodes.length, open);
  }
  return { window, raisedAtEnd: open !== null, episodes };
}

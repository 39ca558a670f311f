import type { ActivitySection } from '../report-figures.js';

/** One verdict as the activity table needs it. */
export interface ActivityVerdict {
  reviewer: string;
  abstained: boolean;
  elapsedMs: number | null;
}

/** The median of a non-empty list (mean of the two middle values for an even count). */
export function median(values: readonly number[]): number {
  if (values.length === 0) throw new RangeError('median: values must not be empty');
  const s = [...values].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid] : (s[mid - 1] + s[mid]) / 2;
}

/**
 * Verdicts and median time per verdict of each reviewer. Listed by name,
 * never ranked: the report describes the work, it does not grade people.
 */
export function activityFigures(verdicts: readonly ActivityVerdict[]): ActivitySection {
  const by = new Map<string, ActivityVerdict[]>();
  for (const v of verdicts) by.set(v.reviewer, [...(by.get(v.reviewer) ?? []), v]);
  const names = [...by.keys()].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  return {
    order: 'name',
    verdicts: verdicts.length,
    reviewers: names.map((name) => {
      const list = by.get(name)!;
      const times = list.map((v) => v.elapsedMs).filter((t): t is number => t !== null);
      return {
        name,
        verdicts: list.length,
        abstained: list.filter((v) => v.abstained).length,
        medianSeconds: times.length ? median(times) / 1000 : null,
      };
    }),
  };
}

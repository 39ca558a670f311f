import type { RehearsalResult } from './rehearsal.js';

/** Median, lowest and highest of some runs' values (null when no run has one). */
export interface Spread {
  median: number | null;
  min: number | null;
  max: number | null;
  /** Runs whose value was missing (e.g. a target never reached). */
  missing: number;
}

export interface MultiSeedSummary {
  seeds: number[];
  target: number;
  /** Full-pool model's macro-F1 on the hold-out set. */
  fullMacroF1: Spread;
  /** Verdicts to reach 95 % of the full model's macro-F1: the strategy's run, and the random run when compared. */
  labelsToReach95: Spread;
  randomLabelsToReach95?: Spread;
  /** Per seed: the strategy's verdicts to reach 95 % over random's (missing when either never got there). */
  ratioToRandom?: Spread;
  /** Calibration (random) verdicts before the sets can leave a category out. */
  randomVerdictsUntilInformative: Spread;
  /** At the last point of the strategy's run, per category: coverage on the open items (primary) and on the hold-out set. */
  openCoverage: Record<string, Spread & { mean: number | null }>;
  holdOutCoverage: Record<string, Spread & { mean: number | null }>;
  /** Per category: the lowest number of its calibration verdicts at the last point over the seeds. */
  fewestCalibrationVerdicts: Record<string, number>;
  /** The answer in one sentence. */
  sentence: string;
}

function spread(values: readonly (number | null | undefined)[]): Spread & { mean: number | null } {
  const present = values.filter((v): v is number => typeof v === 'number' && Number.isFinite(v)).sort((a, b) => a - b);
  const n = present.length;
  if (n === 0) return { median: null, min: null, max: null, mean: null, missing: values.length };
  const mid = n >> 1;
  return {
    median: n % 2 ? present[mid] : (present[mid - 1] + present[mid]) / 2,
    min: present[0],
    max: present[n - 1],
    mean: present.reduce((s, v) => s + v, 0) / n,
    missing: values.length - n,
  };
}

/**
 * Medians and ranges over rehearsals of the same input with different seeds,
 * and the one-sentence answer: how many verdicts a desk like this needs to
 * reach 95 % of the full model's macro-F1, and how many random verdicts before
 * the sets stop holding every category.
 */
export function summarizeSeeds(results: readonly RehearsalResult[]): MultiSeedSummary {
  if (results.length === 0) throw new RangeError('no rehearsal results to summarise');
  const classes = results[0].classes;
  const last = results.map((r) => r.curve.at(-1)!);
  const compared = results.every((r) => r.random !== undefined);
  const strip = ({ mean: _mean, ...rest }: Spread & { mean: number | null }): Spread => rest;
  const openCoverage: MultiSeedSummary['openCoverage'] = {};
  const holdOutCoverage: MultiSeedSummary['holdOutCoverage'] = {};
  const fewestCalibrationVerdicts: Record<string, number> = {};
  for (const c of classes) {
    openCoverage[c] = spread(last.map((p) => p.open.perCategoryCoverage[c]));
    holdOutCoverage[c] = spread(last.map((p) => p.perCategoryCoverage[c]));
    fewestCalibrationVerdicts[c] = Math.min(...last.map((p) => p.calibrationPerCategory[c]));
  }
  const labels95 = spread(results.map((r) => r.labelsToReach['0.95']));
  const informative = spread(results.map((r) => r.randomVerdictsUntilInformative));
  const target = results[0].target;
  const budget = Math.max(...last.map((p) => p.labels));
  const about = (s: Spread, what: string): string =>
    s.median === null
      ? `more than ${budget} ${what} (not reached within the budget)`
      : `about ${Math.round(s.median)} ${what}${s.missing > 0 ? ` (not reached on ${s.missing} of ${results.length} seeds)` : ''}`;
  const sets = results[0].calibration === 'per-category' ? 'per-category sets' : 'sets';
  const sentence =
    `A desk like this needs ${about(labels95, 'verdicts')} to reach 95 % of the full model's macro-F1, ` +
    `and ${about(informative, 'random verdicts')} before ${sets} at ${target} stop holding every category ` +
    `(median over ${results.length} seed${results.length === 1 ? '' : 's'}).`;
  return {
    seeds: results.map((r) => r.seed),
    target,
    fullMacroF1: strip(spread(results.map((r) => r.full.macroF1))),
    labelsToReach95: strip(labels95),
    ...(compared
      ? {
          randomLabelsToReach95: strip(spread(results.map((r) => r.random!.labelsToReach['0.95']))),
          ratioToRandom: strip(
            spread(
              results.map((r) => {
                const a = r.labelsToReach['0.95'];
                const b = r.random!.labelsToReach['0.95'];
                return a === null || b === null ? null : a / b;
              }),
            ),
          ),
        }
      : {}),
    randomVerdictsUntilInformative: strip(informative),
    openCoverage,
    holdOutCoverage,
    fewestCalibrationVerdicts,
    sentence,
  };
}

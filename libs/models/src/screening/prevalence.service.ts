import { Inject, Injectable } from '@nestjs/common';
import type { DeskEntity } from '#database';
import { addScore, emptyScoreSummary, estimatePrevalence, type CountMethod, type ScoreSummary } from '#learning';
import { ScreeningCache, type PoolSnapshot } from './screening-cache.service.js';
import type { PeriodBasis } from './screening.repository.js';

export const PERIODS = ['day', 'week', 'month'] as const;
export type Period = (typeof PERIODS)[number];
export const PERIOD_BASES = ['posted', 'imported'] as const;

/** One category's share of one period's items, with its 95 % interval. */
export interface CategoryShare {
  share: number | null;
  lower: number;
  upper: number;
  method: CountMethod;
  randomVerdicts: number;
}

export interface PeriodPrevalence {
  /** First day of the period (UTC), `YYYY-MM-DD`; weeks start on Monday. */
  start: string;
  items: number;
  /** Items of the period decided by uniform random draws, with a category: the sample behind the estimates. */
  randomVerdicts: number;
  /** Items decided by other draws, counted with their labels. */
  decided: number;
  perCategory: Record<string, CategoryShare>;
}

export interface Prevalence {
  modelVersion: number | null;
  period: Period;
  by: PeriodBasis;
  categories: string[];
  method: string;
  approximation: string;
  /** Items left out because they have no time of that kind (no posted time, with by=posted). */
  undated: number;
  periods: PeriodPrevalence[];
}

const METHOD =
  'For each period and category: items decided by non-random draws count with their label; the rest is estimated ' +
  'by prediction-powered inference (PPI++; Angelopoulos, Bates, Fannjiang, Jordan & Zrnic 2023; Angelopoulos, Duchi ' +
  '& Zrnic 2023) from the period’s random-draw verdicts and the current version’s probabilities over the period’s ' +
  'other items, with a 95 % interval; with fewer than 30 random verdicts, or fewer than 10 with and 10 without the ' +
  'category, the interval comes from the random verdicts alone (Clopper–Pearson), and with none the share is not estimated.';
const APPROXIMATION =
  'Each random draw was uniform over the items open when it was drawn, not over the whole period: the random ' +
  'verdicts are treated as a uniform sample of the period’s items that no other draw decided, which the items ' +
  'taken out since by other draws make approximately, not exactly, true.';

/** The first day (UTC) of the period holding `t`, as `YYYY-MM-DD`. */
export function periodStart(t: Date, period: Period): string {
  const d = new Date(Date.UTC(t.getUTCFullYear(), t.getUTCMonth(), period === 'month' ? 1 : t.getUTCDate()));
  if (period === 'week') d.setUTCDate(d.getUTCDate() - ((d.getUTCDay() + 6) % 7));
  return d.toISOString().slice(0, 10);
}

interface Bucket {
  items: number;
  decided: number;
  decidedBy: number[];
  randomLabels: number[][];
  randomScores: number[][];
  scored: ScoreSummary[];
  unscored: number;
}

/**
 * Prevalence of each category over time: per period (of posting or import)
 * the share of the period's items in each category with a 95 % interval, by
 * prediction-powered inference from the period's random draws and the
 * current version's probabilities ({@link estimatePrevalence}).
 */
@Injectable()
export class PrevalenceService {
  constructor(@Inject(ScreeningCache) private readonly cache: ScreeningCache) {}

  async prevalence(desk: DeskEntity, categories: string[], period: Period, by: PeriodBasis): Promise<Prevalence> {
    const pool = await this.cache.snapshot(desk);
    // The figures depend on the snapshot and these alone (not on targets or watched categories).
    return pool.memo(`prevalence:${JSON.stringify([categories, period, by])}`, () =>
      this.compute(pool, categories, period, by),
    );
  }

  private async compute(
    pool: PoolSnapshot,
    categories: string[],
    period: Period,
    by: PeriodBasis,
  ): Promise<Prevalence> {
    const model = pool.model;
    // The model's order of categories (probability vectors) may differ from the desk's display order.
    const modelIndex = categories.map((c) => model?.categories.indexOf(c) ?? -1);
    const k = categories.length;
    const at = pool.periods(by, (t) => periodStart(t, period), period);
    const buckets: Bucket[] = at.starts.map(() => ({
      items: 0,
      decided: 0,
      decidedBy: Array<number>(k).fill(0),
      randomLabels: categories.map(() => []),
      randomScores: categories.map(() => []),
      scored: categories.map(() => emptyScoreSummary()),
      unscored: 0,
    }));
    let undated = 0;
    const bucketAt = (index: number): Bucket | null => {
      if (index < 0) {
        undated++;
        return null;
      }
      const b = buckets[index];
      b.items++;
      return b;
    };

    const { k: modelK, probs: all } = pool.scored;
    for (let i = 0; i < pool.scored.count; i++) {
      const b = bucketAt(at.scored[i]);
      if (!b) continue;
      for (let c = 0; c < k; c++) addScore(b.scored[c], modelIndex[c] >= 0 ? all[i * modelK + modelIndex[c]] : 0);
    }
    for (let i = 0; i < pool.unscored.count; i++) {
      const b = bucketAt(at.unscored[i]);
      if (b) b.unscored++;
    }

    const decided = pool.decided;
    // Random draws of items whose text is gone cannot be scored: they count with their labels like other decided items.
    const randoms = decided.filter((d) => d.random && d.label !== null && !d.erased);
    const probs = model ? await pool.textProbabilities(randoms.map((r) => r.id)) : null;
    decided.forEach((d, i) => {
      const b = bucketAt(at.decided[i]);
      if (!b) return;
      if (d.label === null) {
        // An abstention: decided, but with no label to count; it stays among the items estimated.
        b.unscored++;
      } else if (d.random && !d.erased) {
        const p = probs?.get(d.id);
        categories.forEach((c, j) => {
          b.randomLabels[j].push(d.label === c ? 1 : 0);
          b.randomScores[j].push(p && modelIndex[j] >= 0 ? p[modelIndex[j]] : 0);
        });
      } else {
        b.decided++;
        const j = categories.indexOf(d.label);
        if (j >= 0) b.decidedBy[j]++;
      }
    });

    const periods = at.starts
      .map((start, i) => [start, buckets[i]] as const)
      .filter(([, b]) => b.items > 0)
      .sort(([a], [b]) => a.localeCompare(b))
      .map(([start, b]): PeriodPrevalence => {
        const perCategory: Record<string, CategoryShare> = {};
        categories.forEach((c, j) => {
          // Without a model every remaining item is unscored: the estimate is then the random verdicts' alone.
          const scored = model ? b.scored[j] : emptyScoreSummary();
          const e = estimatePrevalence({
            decided: b.decided,
            decidedInCategory: b.decidedBy[j],
            randomLabels: b.randomLabels[j],
            randomScores: model ? b.randomScores[j] : b.randomScores[j].map(() => 0),
            unlabelled: { scored, unscored: b.unscored + (model ? 0 : b.scored[j].count) },
          });
          perCategory[c] = {
            share: e.share,
            lower: e.lower,
            upper: e.upper,
            method: e.method,
            randomVerdicts: e.randomVerdicts,
          };
        });
        return {
          start,
          items: b.items,
          randomVerdicts: b.randomLabels[0]?.length ?? 0,
          decided: b.decided,
          perCategory,
        };
      });
    return {
      modelVersion: model?.version ?? null,
      period,
      by,
      categories,
      method: METHOD,
      approximation: APPROXIMATION,
      undated,
      periods,
    };
  }
}

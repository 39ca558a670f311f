import { Inject, Injectable } from '@nestjs/common';
import { Database, type DeskEntity } from '#database';
import { addScore, emptyScoreSummary, estimatePrevalence, type CountMethod, type ScoreSummary } from '#learning';
import type { LoadedModel } from '../model-store.service.js';
import { PredictionsService } from '../predictions.service.js';
import { ScreeningRepository, type PeriodBasis } from './screening.repository.js';

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
  /** Probabilities of decided random-draw items under a version (decided items have no stored prediction). */
  private readonly cache = new Map<string, Map<number, Float64Array>>();

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(ScreeningRepository) private readonly repo: ScreeningRepository,
  ) {}

  async prevalence(desk: DeskEntity, categories: string[], period: Period, by: PeriodBasis): Promise<Prevalence> {
    const model = await this.predictions.current(desk);
    // The model's order of categories (probability vectors) may differ from the desk's display order.
    const modelIndex = categories.map((c) => model?.categories.indexOf(c) ?? -1);
    const buckets = new Map<string, Bucket>();
    const k = categories.length;
    let undated = 0;
    const bucketAt = (at: unknown): Bucket | null => {
      const t = this.db.parseTime(at);
      if (!t) {
        undated++;
        return null;
      }
      const key = periodStart(t, period);
      let b = buckets.get(key);
      if (!b) {
        b = {
          items: 0,
          decided: 0,
          decidedBy: Array<number>(k).fill(0),
          randomLabels: categories.map(() => []),
          randomScores: categories.map(() => []),
          scored: categories.map(() => emptyScoreSummary()),
          unscored: 0,
        };
        buckets.set(key, b);
      }
      b.items++;
      return b;
    };

    for await (const page of this.repo.openAt(desk.id, model?.version ?? null, by)) {
      for (const o of page) {
        const b = bucketAt(o.at);
        if (!b) continue;
        if (o.probabilities === null || !model) {
          b.unscored++;
          continue;
        }
        const p = JSON.parse(o.probabilities) as number[];
        for (let c = 0; c < k; c++) addScore(b.scored[c], modelIndex[c] >= 0 ? p[modelIndex[c]] : 0);
      }
    }

    const decided = await this.repo.decidedAt(desk.id, by);
    // Random draws of items whose text is gone cannot be scored: they count with their labels like other decided items.
    const randoms = decided.filter((d) => d.random && d.label !== null && !d.erased);
    const probs = model
      ? await this.randomProbabilities(
          model,
          randoms.map((r) => r.id),
        )
      : null;
    for (const d of decided) {
      const b = bucketAt(d.at);
      if (!b) continue;
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
    }

    const periods = [...buckets.entries()]
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

  private async randomProbabilities(model: LoadedModel, ids: number[]): Promise<Map<number, Float64Array>> {
    const key = `${model.deskId}:${model.version}`;
    let cache = this.cache.get(key);
    if (!cache) {
      for (const old of this.cache.keys()) if (old.startsWith(`${model.deskId}:`)) this.cache.delete(old);
      cache = new Map();
      this.cache.set(key, cache);
    }
    const missing = ids.filter((id) => !cache.has(id));
    if (missing.length > 0) {
      const texts = await this.repo.texts(missing);
      for (const [id, text] of texts) cache.set(id, model.classifier.predictProba(model.vectorize(text)));
    }
    return cache;
  }
}

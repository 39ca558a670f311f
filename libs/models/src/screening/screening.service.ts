import { Inject, Injectable } from '@nestjs/common';
import type { DeskEntity } from '#database';
import {
  calibrationSizeNeeded,
  compileSeedTerms,
  emptyScoreSummary,
  addScore,
  estimatePopulationCount,
  inEstimationFold,
  predictionSetRule,
  trainingConditionalSizeNeeded,
  wilsonInterval,
  type CountEstimate,
  type ScoreSummary,
} from '#learning';
import { setOptionsOf, targetsOf } from '../set-options.js';
import { ScreeningCache, type PoolSnapshot } from './screening-cache.service.js';
import type { RandomLabel } from './screening.repository.js';

/** What the cleared pile still holds of one watched category. */
export interface ClearedMisses {
  estimate: number | null;
  lower: number;
  upper: number;
  method: CountEstimate['method'];
  /** Random verdicts of the estimation fold whose item the current sets clear (the sample behind the figure). */
  randomVerdicts: number;
  /** Of them, items of the category. */
  ofCategory: number;
}

export interface CategoryScreening {
  target: number;
  confidence: number | null;
  /** Random verdicts of the category behind its threshold (the estimation fold left out). */
  calibrationCount: number;
  /** More random verdicts of the category needed before any item can be cleared of it (0 when none). */
  needMore: number;
  /** Open items whose set holds the category. */
  flagged: number;
  clearedExpectedMisses: ClearedMisses;
  guarantee: string;
}

export interface Screening {
  modelVersion: number | null;
  watch: string[];
  open: number;
  flagged: number;
  cleared: number;
  unscored: number;
  perCategory: Record<string, CategoryScreening>;
  keywordBaseline: {
    /** Open items that match a seed term. */
    flagged: number;
    /** Share of the watched categories' random-draw items that match a seed term (Wilson 95 %); null without any. */
    recall: { estimate: number | null; lower: number; upper: number; randomVerdicts: number };
  };
}

const pct = (x: number) => `${+(x * 100).toFixed(1)} %`;
const count = (x: number) => (x < 10 ? String(+x.toFixed(1)) : String(Math.round(x)));

/** The plain sentence that states a watched category's promise and what the cleared pile still holds. */
export function guaranteeSentence(category: string, c: Omit<CategoryScreening, 'guarantee'>, cleared: number): string {
  const over =
    c.confidence === null
      ? 'on average over the random draws'
      : `with a probability of at least ${pct(c.confidence)} over the random draws`;
  if (c.needMore > 0)
    return `No item is cleared of ${category} yet: a ${pct(c.target)} promise${c.confidence === null ? '' : ` held ${over}`} needs ${c.needMore} more random verdicts of ${category} (it has ${c.calibrationCount}), so every item counts as possibly ${category} until then.`;
  // The lane and the uncertain draws take items out of the open pool by their scores, so the open items left are
  // not exchangeable with the random draws the threshold came from; the promise that holds counts every item of the
  // category the desk has held (see the README's "What the promise covers" and the lane simulation in #learning).
  const promise = `At least ${pct(c.target)} of the ${category} items this desk has held are decided by a reviewer or flagged now, ${over} (threshold from ${c.calibrationCount} random verdicts of ${category}); among the open items alone the share can be lower, because the review lane takes the likeliest ones first.`;
  const m = c.clearedExpectedMisses;
  if (cleared === 0) return `${promise} No item is cleared.`;
  if (m.method === 'none')
    return `${promise} How many ${category} items the ${cleared} cleared items still hold cannot be estimated yet: no held-out random verdict fell among them.`;
  const how =
    m.method === 'ppi++'
      ? `from ${m.randomVerdicts} held-out random verdicts and the model's probabilities`
      : `from ${m.randomVerdicts} held-out random verdicts alone, too few for the model-assisted estimate`;
  return `${promise} The ${cleared} cleared items hold an estimated ${count(m.estimate ?? 0)} ${category} items (95 % interval ${count(m.lower)}–${count(m.upper)}, ${how}).`;
}

/**
 * Screening under the current version: every open item is flagged (its
 * prediction set holds a watched category), cleared (it holds none) or
 * unscored (imported since the version scored the pool). Per watched
 * category: the promise (its target, the random verdicts behind its
 * threshold, how many more it needs) and the number of its items the cleared
 * pile still holds, estimated by prediction-powered inference (Angelopoulos,
 * Bates, Fannjiang, Jordan & Zrnic 2023; PPI++, Angelopoulos, Duchi & Zrnic
 * 2023) from the estimation fold's random verdicts that fall in the cleared
 * pile and the model's probabilities over the whole pile, or bounded by
 * Clopper–Pearson from those verdicts alone when they are too few.
 */
@Injectable()
export class ScreeningService {
  constructor(@Inject(ScreeningCache) private readonly cache: ScreeningCache) {}

  async screening(desk: DeskEntity): Promise<Screening> {
    const pool = await this.cache.snapshot(desk);
    // Everything of the desk the answer depends on besides the snapshot.
    const settings = JSON.stringify([
      desk.watch,
      desk.coverageTarget,
      desk.coverageTargets,
      desk.calibration,
      desk.confidence,
      desk.score,
      desk.seedTerms,
    ]);
    return pool.memo(`screening:${settings}`, () => this.compute(desk, pool));
  }

  private async compute(desk: DeskEntity, pool: PoolSnapshot): Promise<Screening> {
    const { model, open, randoms } = pool;
    const keywordBaseline = this.keywordBaseline(desk, randoms, pool.seedMatches);
    if (!model) return this.beforeFirstModel(desk, open, keywordBaseline);

    const categories = model.categories;
    const watch = desk.watch.filter((c) => categories.includes(c));
    const watched = watch.map((c) => categories.indexOf(c));
    const options = setOptionsOf(desk, categories);
    const rule = predictionSetRule(model.calibration, options);
    const thresholds = model.calibration.thresholds(desk.score, options.alpha, desk.calibration, options);
    const isFlagged = (set: number[]) => set.some((c) => watched.includes(c));

    let flagged = 0;
    let cleared = 0;
    const flaggedBy = watched.map(() => 0);
    const pile: ScoreSummary[] = watched.map(() => emptyScoreSummary());
    const { k, probs: all } = pool.scored;
    for (let i = 0; i < pool.scored.count; i++) {
      const probs = all.subarray(i * k, i * k + k);
      const set = rule(probs).categories;
      watched.forEach((c, j) => {
        if (set.includes(c)) flaggedBy[j]++;
      });
      if (isFlagged(set)) flagged++;
      else {
        cleared++;
        watched.forEach((c, j) => addScore(pile[j], probs[c]));
      }
    }

    // The estimation fold's random verdicts whose items the current sets clear: a sample of the cleared pile.
    const fold = randoms.filter((r) => inEstimationFold(r.itemId));
    const probsOf = await pool.textProbabilities(fold.map((r) => r.itemId));
    const sample = fold.filter((r) => probsOf.has(r.itemId) && !isFlagged(rule(probsOf.get(r.itemId)!).categories));
    const targets = targetsOf(desk, categories);
    const perCategory: Record<string, CategoryScreening> = {};
    watched.forEach((c, j) => {
      const name = categories[c];
      const labels = sample.map((r) => (r.label === name ? 1 : 0));
      const scores = sample.map((r) => probsOf.get(r.itemId)![c]);
      const m = estimatePopulationCount(labels, scores, { scored: pile[j], unscored: 0 });
      const figures = {
        target: targets[c],
        confidence: desk.confidence,
        calibrationCount: thresholds[c].n,
        needMore: thresholds[c].needMore,
        flagged: flaggedBy[j],
        clearedExpectedMisses: {
          estimate: m.estimate,
          lower: m.lower,
          upper: m.upper,
          method: m.method,
          randomVerdicts: m.labelled,
          ofCategory: m.events,
        },
      };
      perCategory[name] = { ...figures, guarantee: guaranteeSentence(name, figures, cleared) };
    });
    return {
      modelVersion: model.version,
      watch,
      open,
      flagged,
      cleared,
      unscored: open - flagged - cleared,
      perCategory,
      keywordBaseline,
    };
  }

  private beforeFirstModel(desk: DeskEntity, open: number, keywordBaseline: Screening['keywordBaseline']): Screening {
    const perCategory: Record<string, CategoryScreening> = {};
    for (const name of desk.watch) {
      const target = desk.coverageTargets[name] ?? desk.coverageTarget;
      const needed =
        desk.confidence === null
          ? calibrationSizeNeeded(0, 1 - target)
          : trainingConditionalSizeNeeded(0, 1 - target, desk.confidence);
      const figures = {
        target,
        confidence: desk.confidence,
        calibrationCount: 0,
        needMore: needed,
        flagged: 0,
        clearedExpectedMisses: {
          estimate: 0,
          lower: 0,
          upper: 0,
          method: 'exact' as const,
          randomVerdicts: 0,
          ofCategory: 0,
        },
      };
      perCategory[name] = { ...figures, guarantee: guaranteeSentence(name, figures, 0) };
    }
    return {
      modelVersion: null,
      watch: desk.watch,
      open,
      flagged: 0,
      cleared: 0,
      unscored: open,
      perCategory,
      keywordBaseline,
    };
  }

  /** What flagging every item that matches a seed term would do: its reading load and its recall of the watched categories. */
  private keywordBaseline(desk: DeskEntity, randoms: RandomLabel[], seedMatches: number): Screening['keywordBaseline'] {
    const matcher = compileSeedTerms(desk.seedTerms);
    const watchedItems = randoms.filter((r) => desk.watch.includes(r.label));
    const hits = watchedItems.filter((r) => matcher.count(r.text) > 0).length;
    const n = watchedItems.length;
    const ci = n > 0 ? wilsonInterval(hits, n) : null;
    return {
      flagged: seedMatches,
      recall: { estimate: n > 0 ? hits / n : null, lower: ci?.lower ?? 0, upper: ci?.upper ?? 1, randomVerdicts: n },
    };
  }
}

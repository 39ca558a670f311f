import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database, type DbInt, type DeskEntity, type ShownPrediction } from '#database';
import { predictionSet, wilsonInterval } from '#learning';
import { ModelStore, type LoadedModel } from './model-store.service.js';
import { setOptionsOf, targetsOf } from './set-options.js';

/** What stands behind the thresholds at a desk's target. */
export interface CalibrationStatus {
  modelVersion: number;
  target: number;
  mode: DeskEntity['calibration'];
  score: DeskEntity['score'];
  /** Null: expected coverage; else the confidence of the training-conditional thresholds. */
  confidence: number | null;
  /** Calibration verdicts behind each threshold (one for marginal, one per category otherwise). */
  thresholds: Array<{
    category: string | null;
    /** The coverage target of this threshold (a category's own, or the desk's). */
    target: number;
    threshold: number | null;
    n: number;
    /** Calibration verdicts of the estimation fold left out of this threshold (watched categories only). */
    heldOut: number;
    needMore: number;
  }>;
  /** More random verdicts needed before every threshold is finite at this target (0 when none are missing). */
  needMore: number;
}

/**
 * Predictions as reviewers and supervisors see them: the stored
 * probabilities of the current version, turned into a prediction set at the
 * desk's *current* coverage target and mode. Changing the target therefore
 * changes every set at once, from the stored calibration scores, with no
 * retraining and no new version.
 */
@Injectable()
export class PredictionsService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(ModelStore) private readonly store: ModelStore,
  ) {}

  async current(desk: DeskEntity): Promise<LoadedModel | null> {
    return desk.currentModelVersion === null ? null : this.store.load(desk.id, desk.currentModelVersion);
  }

  show(desk: DeskEntity, model: LoadedModel, probs: ArrayLike<number>): ShownPrediction {
    // predictionSet checks that every entry is a probability.
    const set = predictionSet(probs, model.calibration, setOptionsOf(desk, model.categories));
    return {
      modelVersion: model.version,
      probabilities: Object.fromEntries(model.categories.map((c, i) => [c, probs[i]])),
      set: set.categories.map((i) => model.categories[i]),
      call: set.call,
    };
  }

  /**
   * The prediction shown with an item under the current version: the stored
   * probabilities, or, for an item the version did not score (imported since,
   * or already decided and now served for a second opinion), computed from
   * its text on the spot. Null only when no model exists.
   */
  async forItem(
    m: EntityManager | null,
    desk: DeskEntity,
    itemId: number,
    text: string,
  ): Promise<ShownPrediction | null> {
    const model = await this.current(desk);
    if (!model) return null;
    const row = await this.db.queryOne<{ probabilities: string }>(
      m,
      'SELECT probabilities FROM predictions WHERE item_id = $1 AND model_version = $2',
      [itemId, model.version],
    );
    return this.show(
      desk,
      model,
      row ? (JSON.parse(row.probabilities) as number[]) : model.classifier.predictProba(model.vectorize(text)),
    );
  }

  calibrationStatus(desk: DeskEntity, model: LoadedModel, target = desk.coverageTarget): CalibrationStatus {
    const options = setOptionsOf(desk, model.categories, target);
    const t = model.calibration.thresholds(desk.score, options.alpha, desk.calibration, options);
    const per = desk.calibration === 'per-category';
    const targets = per ? targetsOf(desk, model.categories, target) : model.categories.map(() => target);
    const thresholds = t.map((x, i) => ({
      category: per ? model.categories[i] : null,
      target: targets[i],
      threshold: Number.isFinite(x.threshold) ? x.threshold : null,
      n: x.n,
      heldOut: x.heldOut,
      needMore: x.needMore,
    }));
    return {
      modelVersion: model.version,
      target,
      mode: desk.calibration,
      score: desk.score,
      confidence: desk.confidence,
      thresholds: per ? thresholds : thresholds.slice(0, 1),
      needMore: Math.max(0, ...t.map((x) => x.needMore)),
    };
  }

  /** Every stored probability vector of the current version, in item order, page by page. */
  async *probabilities(
    desk: DeskEntity,
    model: LoadedModel,
    pageSize = 5000,
  ): AsyncGenerator<{ itemId: number; probs: number[] }> {
    let after = 0;
    for (;;) {
      const rows = await this.db.query<{ item_id: DbInt; probabilities: string }>(
        null,
        `SELECT p.item_id, p.probabilities FROM predictions p JOIN items i ON i.id = p.item_id
         WHERE p.desk_id = $1 AND p.model_version = $2 AND i.state <> 'decided' AND p.item_id > $3 ORDER BY p.item_id LIMIT ${pageSize}`,
        [desk.id, model.version, after],
      );
      for (const r of rows) yield { itemId: Number(r.item_id), probs: JSON.parse(r.probabilities) as number[] };
      if (rows.length < pageSize) return;
      after = Number(rows[rows.length - 1].item_id);
    }
  }

  /**
   * For targets 0.50…0.99 in steps of 0.01: the share of sure, ambiguous and
   * unfamiliar calls and the mean set size over the open pool, under the
   * current version, calibration mode and confidence. Categories with a
   * target of their own keep it.
   */
  async coveragePreview(desk: DeskEntity) {
    const model = await this.current(desk);
    if (!model) return { modelVersion: null, points: [] };
    const targets = Array.from({ length: 50 }, (_, i) => Math.round((0.5 + i * 0.01) * 100) / 100);
    const acc = targets.map(() => ({
      sure: 0,
      ambiguous: 0,
      unfamiliar: 0,
      size: 0,
      sizes: new Array<number>(model.categories.length + 1).fill(0),
    }));
    let n = 0;
    for await (const { probs } of this.probabilities(desk, model)) {
      n++;
      for (const [i, target] of targets.entries()) {
        const s = predictionSet(probs, model.calibration, setOptionsOf(desk, model.categories, target));
        acc[i][s.call]++;
        acc[i].size += s.categories.length;
        acc[i].sizes[s.categories.length]++;
      }
    }
    return {
      modelVersion: model.version,
      items: n,
      mode: desk.calibration,
      points: targets.map((target, i) => {
        const a = acc[i];
        const st = this.calibrationStatus(desk, model, target);
        return {
          target,
          sureShare: n ? a.sure / n : 0,
          ambiguousShare: n ? a.ambiguous / n : 0,
          unfamiliarShare: n ? a.unfamiliar / n : 0,
          meanSetSize: n ? a.size / n : 0,
          calibrationCount: Math.min(...st.thresholds.map((x) => x.n)),
          needMore: st.needMore,
          /** Open items by set size (index = number of categories in the set). */
          setSizes: a.sizes,
        };
      }),
    };
  }

  /**
   * Realized coverage of random draws: each verdict on a `random` draw is
   * compared with the set shown when it was drawn. Per model version, per
   * category, and over the last 200; Wilson 95 % intervals (Newcombe 1998).
   * An alert is raised when the window's upper bound is below the target:
   * the stream no longer looks like what the model was calibrated on.
   */
  async coverage(desk: DeskEntity, window = 200) {
    const rows = await this.db.query<{ id: DbInt; model_version: DbInt; category: string; shown_set: string }>(
      null,
      `SELECT v.id, v.model_version, c.name AS category, v.shown_set FROM verdicts v JOIN categories c ON c.id = v.category_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.undone_at IS NULL AND v.model_version IS NOT NULL AND v.shown_set IS NOT NULL ORDER BY v.id`,
      [desk.id],
    );
    const hit = (r: (typeof rows)[number]) => (JSON.parse(r.shown_set) as string[]).includes(r.category);
    const summarise = (list: typeof rows) => {
      const x = list.filter(hit).length;
      const ci = list.length ? wilsonInterval(x, list.length) : null;
      return {
        n: list.length,
        covered: x,
        coverage: list.length ? x / list.length : null,
        interval: ci ? { lower: ci.lower, upper: ci.upper } : null,
      };
    };
    const versions = [...new Set(rows.map((r) => Number(r.model_version)))].sort((a, b) => a - b);
    const last = rows.slice(-window);
    const windowSummary = summarise(last);
    const alert = windowSummary.interval !== null && windowSummary.interval.upper < desk.coverageTarget;
    const perCategory = (list: typeof rows) =>
      Object.fromEntries(
        [...new Set(list.map((r) => r.category))]
          .sort()
          .map((c) => [c, summarise(list.filter((r) => r.category === c))]),
      );
    return {
      target: desk.coverageTarget,
      mode: desk.calibration,
      byVersion: versions.map((v) => {
        const list = rows.filter((r) => Number(r.model_version) === v);
        return { modelVersion: v, ...summarise(list), perCategory: perCategory(list) };
      }),
      window: { size: window, ...windowSummary, perCategory: perCategory(last) },
      alert: alert
        ? {
            raised: true,
            message: `Over the last ${last.length} random checks the prediction sets held the reviewers' answer ${(windowSummary.coverage! * 100).toFixed(1)} % of the time; even the top of its 95 % range (${(windowSummary.interval!.upper * 100).toFixed(1)} %) is below the ${(desk.coverageTarget * 100).toFixed(1)} % promised. The texts arriving now probably differ from those the model was calibrated on: treat sure calls with care until the next versions have recalibrated on recent random checks.`,
          }
        : { raised: false, message: null },
    };
  }
}

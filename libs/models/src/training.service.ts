import { createHash } from 'node:crypto';
import { Inject, Injectable, Logger } from '@nestjs/common';
import {
  CategoryEntity,
  Database,
  DeskEntity,
  ModelVersionEntity,
  type DbInt,
  type VerdictSetSummary,
} from '#database';
import {
  accuracy,
  brierScore,
  ConformalCalibration,
  expectedCalibrationError,
  IdfTable,
  inEstimationFold,
  LogisticModel,
  logLoss,
  remapCategories,
  type FeaturizerOptions,
  type IdfTableJson,
  type LogisticModelJson,
  macroF1,
  reliabilityBins,
  tfidf,
  topLabelConfidence,
} from '#learning';
import { JobQueueService, type RetrainDeskPayload } from '#queues';
import { DeskFeaturesService } from './desk-features.service.js';
import { FIRST_MODEL_MIN_PER_CATEGORY } from './retrain-scheduler.service.js';
import { enqueueScoring } from './scoring-flow.js';
import { versionsToSupersede, type VersionOnItsWay } from './supersede.js';
import { trainInThread } from './training-protocol.js';
import { NotFound } from '#errors';

/** Items per scoring chunk: each chunk is its own job, taken by any worker process. */
export const DEFAULT_CHUNK_SIZE = 5000;

interface LabelledRow {
  item_id: DbInt;
  draw: string;
  category: string | null;
  text: string;
}

/** Pauses named points of the retrain when the test hook asks (CRIBRA_TEST_PAUSE), so crash tests can kill at a known moment. */
export type PauseHook = (point: 'training' | 'scoring') => Promise<void>;
export const PAUSE_HOOK = Symbol('PAUSE_HOOK');

/**
 * Trains a new model version of a desk: training on every verdict except
 * uniform random draws, calibration on random draws only (they are
 * exchangeable with the pool; items picked by uncertainty are not), quality
 * figures on the calibration set; then starts scoring the pool in chunks.
 */
@Injectable()
export class TrainingService {
  private readonly logger = new Logger('Training');

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(PAUSE_HOOK) private readonly pause: PauseHook,
  ) {}

  async run(
    payload: RetrainDeskPayload,
    chunkSize = DEFAULT_CHUNK_SIZE,
  ): Promise<{ version: number | null; reason?: string }> {
    const { deskId, base } = payload;
    const jobKey = `retrain-${deskId}-${base}`;
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    if (!desk) throw new NotFound(`no desk ${deskId}`);
    const categories = (
      await this.db.manager.find(CategoryEntity, { where: { deskId }, order: { position: 'ASC' } })
    ).map((c) => c.name);
    const row = await this.db.manager.findOneBy(ModelVersionEntity, { jobKey });
    if (row && (row.state === 'published' || row.state === 'superseded'))
      return { version: row.version, reason: `already ${row.state}` };
    if (row && row.state === 'scoring') {
      // A retry after the flow was (maybe) created: adding it again is a no-op.
      await this.startScoring(deskId, row.version, chunkSize);
      return { version: row.version };
    }
    const t0 = performance.now();
    // MAX answers one row, null over no rows.
    const [wm] = await this.db.query<{ w: DbInt | null }>(
      null,
      'SELECT MAX(id) AS w FROM verdicts WHERE desk_id = $1',
      [deskId],
    );
    const watermark = Number(wm.w ?? 0);
    const labelled = await this.db.query<LabelledRow>(
      null,
      `SELECT v.item_id, v.draw, c.name AS category, i.text FROM verdicts v LEFT JOIN categories c ON c.id = v.category_id JOIN items i ON i.id = v.item_id
       WHERE v.desk_id = $1 AND v.undone_at IS NULL AND v.id <= $2 AND i.erased_at IS NULL ORDER BY v.id`,
      [deskId, watermark],
    );
    const settled = await this.db.query<{ item_id: DbInt; category: string }>(
      null,
      `SELECT s.item_id, c.name AS category FROM settlements s JOIN categories c ON c.id = s.category_id
       WHERE s.desk_id = $1 AND s.id = (SELECT MAX(s2.id) FROM settlements s2 WHERE s2.item_id = s.item_id)`,
      [deskId],
    );
    // Erased items (their text and term counts are gone) neither train nor calibrate; their verdicts stay in the trail.
    // One label per item: the supervisor's latest settlement when the item was settled, else the latest verdict of its
    // original draw, never a second opinion. A second opinion is served because the item was decided already, so taking
    // its label instead would replace the labels of the items reviewers disagree on (the hard cases) by later ones: the
    // labels of random draws would no longer be those of a uniform draw, and the calibration would be biased.
    // An item ever drawn uniformly at random calibrates and never trains; settling does not change its draw.
    const byItem = new Map<
      number,
      { label: string | null; random: boolean; settled: boolean; text: string; draws: Set<string> }
    >();
    for (const r of labelled) {
      const e = byItem.get(Number(r.item_id)) ?? {
        label: null,
        random: false,
        settled: false,
        text: r.text,
        draws: new Set<string>(),
      };
      byItem.set(Number(r.item_id), e);
      if (r.draw === 'second-opinion') continue;
      if (r.category !== null) e.label = r.category;
      e.draws.add(r.draw);
      if (r.draw === 'random') e.random = true;
    }
    for (const r of settled) {
      const e = byItem.get(Number(r.item_id));
      if (e) Object.assign(e, { label: r.category, settled: true });
    }
    const labelledItems = [...byItem.entries()].filter(
      (x): x is [number, (typeof x)[1] & { label: string }] => x[1].label !== null,
    );
    const train = labelledItems.filter(([, e]) => !e.random).sort((a, b) => a[0] - b[0]);
    const calib = labelledItems.filter(([, e]) => e.random).sort((a, b) => a[0] - b[0]);
    const hasModel = desk.currentModelVersion !== null;
    const perCategory = (rows: typeof train) =>
      Object.fromEntries(categories.map((c) => [c, rows.filter(([, e]) => e.label === c).length]));
    // A desk started from another desk's version serves that classifier (recalibrated on its own random verdicts,
    // scoring items imported since) until its own training verdicts hold every category the classifier knows; from
    // then on it trains on them with the transferred weights as prior.
    const transfer = await this.transferOrigin(deskId, categories);
    const reissue =
      transfer !== null && transfer.known.some((c) => (perCategory(train)[c] ?? 0) < FIRST_MODEL_MIN_PER_CATEGORY);
    if (!hasModel && !reissue && categories.some((c) => (perCategory(train)[c] ?? 0) < FIRST_MODEL_MIN_PER_CATEGORY))
      return { version: null, reason: 'not enough training verdicts for a first model' };
    if (!reissue && new Set(train.map(([, e]) => e.label)).size < 2)
      return { version: null, reason: 'training verdicts cover fewer than two categories' };

    const digest = (rows: typeof train) =>
      createHash('sha256')
        .update(rows.map(([id, e]) => `${id}\t${e.label}`).join('\n'))
        .digest('hex');
    if (!row && hasModel) {
      // Nothing new to learn from: the same labels would give the same classifier and calibration again (the warm
      // start aside), so a new version would only add a copy to the list and a report to read.
      const current = await this.db.manager.findOneBy(ModelVersionEntity, {
        deskId,
        version: desk.currentModelVersion!,
      });
      if (
        current?.training.labelsDigest !== undefined &&
        current.training.labelsDigest === digest(train) &&
        current.calibration.labelsDigest === digest(calib)
      ) {
        const reason = `no new version: version ${current.version} was trained and calibrated on the same verdicts (${train.length} training, ${calib.length} calibration)`;
        this.logger.log(`desk ${deskId}: ${reason}`);
        return { version: null, reason };
      }
    }

    const version = row?.version ?? (await this.nextVersion(deskId));
    const summary = (rows: typeof train): VerdictSetSummary => {
      const draws: Record<string, number> = {};
      for (const [, e] of rows) for (const d of e.draws) draws[d] = (draws[d] ?? 0) + 1;
      return {
        counts: perCategory(rows),
        draws,
        itemIds: rows.map(([id]) => id),
        settledItemIds: rows.filter(([, e]) => e.settled).map(([id]) => id),
        labelsDigest: digest(rows),
      };
    };
    if (!row) {
      await this.db.write(async (m) => {
        await m.insert(ModelVersionEntity, {
          deskId,
          version,
          parentVersion: desk.currentModelVersion,
          state: 'training',
          jobKey,
          verdictWatermark: watermark,
          training: summary(train),
          calibration: { ...summary(calib), scores: null },
          model: null,
          metrics: null,
          timings: {},
          failure: null,
          createdAt: new Date(),
          publishedAt: null,
        } as never);
      });
    }
    await this.pause('training');

    const idf: IdfTable = reissue ? transfer.idf : await this.features.table(deskId);
    const featurizer = reissue ? this.features.featurizer(transfer.featurizer) : this.features.featurizer(idf.hashBits);
    const vectorize = (text: string) => tfidf(featurizer.counts(text), idf);
    const tFeat = performance.now();
    const trainVectors = train.map(([, e]) => vectorize(e.text));
    const calibVectors = calib.map(([, e]) => vectorize(e.text));
    // Warm start from the desk's current version: its weights are near the new optimum.
    const parent =
      desk.currentModelVersion === null
        ? null
        : await this.db.manager.findOneBy(ModelVersionEntity, { deskId, version: desk.currentModelVersion });
    const parentClassifier = (parent?.model?.classifier ?? null) as LogisticModelJson | null;
    const tTrain = performance.now();
    const classifierJson = reissue
      ? transfer.classifier
      : await trainInThread(
          trainVectors,
          train.map(([, e]) => e.label),
          categories,
          idf.hashBits,
          parentClassifier,
          transfer?.classifier ?? null,
        );
    const classifier = LogisticModel.fromJSON(classifierJson);
    const tCal = performance.now();
    const probs = calibVectors.map((v) => classifier.predictProba(v));
    const labels = calib.map(([, e]) => categories.indexOf(e.label));
    // The estimation fold is marked, not removed: watched categories' thresholds leave it out when read.
    const calibration = ConformalCalibration.fromScores(categories, probs, labels, {
      heldOut: calib.map(([id]) => inEstimationFold(id)),
    });
    const metrics = probs.length > 0 ? qualityFigures(probs, labels, categories.length) : null;
    const tDone = performance.now();
    const timings = {
      loadMs: tFeat - t0,
      featurizeMs: tTrain - tFeat,
      trainMs: tCal - tTrain,
      calibrateMs: tDone - tCal,
      scoringStartedAt: Date.now(),
    };
    const stopped = await this.db.write(async (m) => {
      // The desk row is the lock every version of the desk takes to change state (training ends, publishing), so the
      // versions on their way are read and stopped consistently.
      await this.db.query(m, `SELECT id FROM desks WHERE id = $1${this.db.lockRows({ noKey: true })}`, [deskId]);
      const onTheirWay = await this.db.query<{ version: DbInt; state: VersionOnItsWay['state'] }>(
        m,
        `SELECT version, state FROM model_versions WHERE desk_id = $1 AND state IN ('training', 'scoring')`,
        [deskId],
      );
      // A newer version published while this one trained: it stopped this one, which stays stopped.
      if (!onTheirWay.some((v) => Number(v.version) === version)) return true;
      await m.update(
        ModelVersionEntity,
        { jobKey },
        {
          state: 'scoring',
          calibration: { ...summary(calib), scores: calibration.toJSON() },
          model: { classifier: classifierJson, idf: idf.toJSON(), featurizer: featurizer.options },
          metrics: metrics,
          timings: timings,
        },
      );
      // Older versions still on their way stop, except the oldest one scoring (versionsToSupersede says why).
      const stop = versionsToSupersede(
        version,
        onTheirWay.map((v) => ({ version: Number(v.version), state: v.state })),
      );
      if (stop.length > 0)
        await this.db.query(
          m,
          `UPDATE model_versions SET state = 'superseded' WHERE desk_id = $1 AND version IN (${this.db.inList(stop.length, 2)})`,
          [deskId, ...stop],
        );
      return false;
    });
    if (stopped) {
      this.logger.log(`desk ${deskId} v${version}: a newer version was published while it trained; stopped`);
      return { version, reason: 'superseded while training' };
    }
    await this.startScoring(deskId, version, chunkSize);
    this.logger.log(
      `desk ${deskId} v${version}: trained on ${train.length}, calibrated on ${calib.length} in ${Math.round(tDone - t0)} ms`,
    );
    return { version };
  }

  /**
   * The classifier a desk's first version was transferred from (mapped onto the desk's categories as they are now),
   * with its idf and featuriser; null for a desk that started cold.
   */
  private async transferOrigin(deskId: number, categories: string[]) {
    const first = await this.db.manager.findOneBy(ModelVersionEntity, { deskId, version: 1 });
    if (!first?.model?.origin) return null;
    const { model } = remapCategories(LogisticModel.fromJSON(first.model.classifier as LogisticModelJson), categories);
    return {
      classifier: model.toJSON(),
      known: model.trained.map((p) => categories[p]),
      idf: IdfTable.fromJSON(first.model.idf as IdfTableJson),
      featurizer: first.model.featurizer as FeaturizerOptions,
    };
  }

  private async nextVersion(deskId: number): Promise<number> {
    // MAX answers one row, null over no rows.
    const [r] = await this.db.query<{ v: DbInt | null }>(
      null,
      'SELECT MAX(version) AS v FROM model_versions WHERE desk_id = $1',
      [deskId],
    );
    return Number(r.v ?? 0) + 1;
  }

  private async startScoring(deskId: number, version: number, chunkSize: number): Promise<void> {
    await enqueueScoring(this.db, this.jobs, deskId, version, chunkSize);
  }
}

/** Accuracy, macro-F1, log loss, Brier score, ECE and the reliability diagram on the calibration set. */
export function qualityFigures(probs: Float64Array[], labels: number[], k: number) {
  const predicted = probs.map((p) => p.indexOf(Math.max(...p)));
  const { confidences, correct } = topLabelConfidence(probs, labels);
  return {
    n: labels.length,
    accuracy: accuracy(labels, predicted, k),
    macroF1: macroF1(labels, predicted, k),
    logLoss: logLoss(probs, labels),
    brier: brierScore(probs, labels),
    ece: expectedCalibrationError(confidences, correct, 10),
    reliability: reliabilityBins(confidences, correct, 10),
  };
}

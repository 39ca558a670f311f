import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database, DeskEntity, ModelVersionEntity, type ModelOrigin } from '#database';
import {
  ConformalCalibration,
  DEFAULT_HASH_BITS,
  featurizerSettings,
  IdfTable,
  LogisticModel,
  modelExport,
  remapCategories,
  sameFeaturizer,
  type FeaturizerOptions,
  type IdfTableJson,
  type LogisticModelJson,
  type ModelExportJson,
} from '#learning';
import { JobQueueService } from '#queues';
import { enqueueScoring } from '../scoring-flow.js';
import { DEFAULT_CHUNK_SIZE } from '../training.service.js';
import { InvalidInput, NotFound } from '#errors';

/** A source version checked and mapped onto a new desk's categories, ready to become its first version. */
export interface PreparedTransfer {
  model: { classifier: LogisticModelJson; idf: IdfTableJson; featurizer: FeaturizerOptions; origin: ModelOrigin };
}

/** Versions that hold a classifier and may be read: being scored or published (not training, failed or superseded). */
const READABLE = ['scoring', 'published'];

/**
 * A version's classifier as a file (`model.json`), and a new desk's first
 * version made from another desk's version: the same classifier and the idf
 * it was trained with (so it scores texts exactly as it did there), the
 * categories mapped by name, no calibration (every set holds every category
 * until the desk's own random verdicts arrive).
 */
@Injectable()
export class ModelTransferService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  private async source(deskId: number, version: number, status: 400 | 404) {
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    if (!desk) throw new NotFound(`no desk ${deskId}`);
    const row = await this.db.manager.findOneBy(ModelVersionEntity, { deskId, version });
    const fail = (why: string): never => {
      throw status === 404 ? new NotFound(why) : new InvalidInput([`startFrom.version: ${why}`]);
    };
    if (!row) {
      const [latest] = await this.db.query<{ v: unknown }>(
        null,
        `SELECT MAX(version) AS v FROM model_versions WHERE desk_id = $1 AND state = 'published'`,
        [deskId],
      );
      return fail(
        latest.v === null
          ? `desk ${deskId} has no model version yet`
          : `desk ${deskId} has no model version ${version} (its newest published version is ${Number(latest.v)})`,
      );
    }
    if (!READABLE.includes(row.state) || !row.model)
      return fail(`version ${version} of desk ${deskId} is ${row.state}: it has no classifier to give`);
    return { desk, row, model: row.model };
  }

  /** The version's classifier in the model file format (`cribra.model-export`, see libs/learning). */
  async exportOf(deskId: number, version: number): Promise<ModelExportJson> {
    const { desk, row, model } = await this.source(deskId, version, 404);
    const idf = IdfTable.fromJSON(model.idf as IdfTableJson);
    // Versions written before the featuriser settings were stored used the defaults at the idf's size.
    const featurizer = (model.featurizer as FeaturizerOptions | undefined) ?? { hashBits: idf.hashBits };
    return modelExport(
      { deskId, deskName: desk.name, version, publishedAt: row.publishedAt?.toISOString() ?? null },
      LogisticModel.fromJSON(model.classifier as LogisticModelJson),
      idf,
      featurizer,
    );
  }

  /**
   * Checks that version `version` of desk `deskId` can start a desk with these categories: it exists and holds a
   * classifier, its featuriser is the one new desks use (else 400: the hashed buckets would mean other n-grams),
   * and at least two of its trained categories are among `categories`.
   */
  async prepare(deskId: number, version: number, categories: string[]): Promise<PreparedTransfer> {
    const { desk, model } = await this.source(deskId, version, 400);
    const idf = IdfTable.fromJSON(model.idf as IdfTableJson);
    const featurizer = (model.featurizer as FeaturizerOptions | undefined) ?? { hashBits: idf.hashBits };
    const wanted = { hashBits: DEFAULT_HASH_BITS };
    if (!sameFeaturizer(featurizer, wanted))
      throw new InvalidInput([
        `startFrom: version ${version} of desk ${deskId} was trained with featuriser settings ${JSON.stringify(featurizerSettings(featurizer))}, and new desks use ${JSON.stringify(featurizerSettings(wanted))}; its weights would be read on other n-grams`,
      ]);
    let mapped: ReturnType<typeof remapCategories>;
    try {
      mapped = remapCategories(LogisticModel.fromJSON(model.classifier as LogisticModelJson), categories);
    } catch (e) {
      if (e instanceof RangeError)
        throw new InvalidInput([
          `startFrom: the new desk's categories share fewer than two trained categories with version ${version} of desk ${deskId} (${trainedNames(model.classifier as LogisticModelJson).join(', ')})`,
        ]);
      throw e;
    }
    return {
      model: {
        classifier: mapped.model.toJSON(),
        idf: idf.toJSON(),
        featurizer: featurizerSettings(featurizer),
        origin: { deskId, deskName: desk.name, version, untrained: mapped.untrained, dropped: mapped.dropped },
      },
    };
  }

  /** Writes the new desk's first version (state `scoring`), in the desk's creation transaction. */
  async install(m: EntityManager, deskId: number, categories: string[], prepared: PreparedTransfer): Promise<void> {
    const none = Object.fromEntries(categories.map((c) => [c, 0]));
    const empty = { counts: none, draws: {}, itemIds: [], settledItemIds: [] };
    await m.insert(ModelVersionEntity, {
      deskId,
      version: 1,
      parentVersion: null,
      state: 'scoring',
      jobKey: `transfer-${deskId}`,
      verdictWatermark: 0,
      training: empty,
      // No calibration scores: k > n for every threshold, so every set is every category until random verdicts come.
      calibration: { ...empty, scores: ConformalCalibration.fromScores(categories, [], []).toJSON() },
      model: prepared.model,
      metrics: null,
      timings: { scoringStartedAt: Date.now() },
      failure: null,
      createdAt: new Date(),
      publishedAt: null,
    } as never);
  }

  /** After the creation committed: score the pool under the first version and publish it. */
  async start(deskId: number): Promise<void> {
    await enqueueScoring(this.db, this.jobs, deskId, 1, DEFAULT_CHUNK_SIZE);
  }

  /** Where a desk's first version came from, with that version's classifier; null for a desk that started cold. */
  async origin(
    deskId: number,
  ): Promise<{ origin: ModelOrigin; model: NonNullable<ModelVersionEntity['model']> } | null> {
    const row = await this.db.manager.findOneBy(ModelVersionEntity, { deskId, version: 1 });
    const model = row?.model;
    return model?.origin ? { origin: model.origin, model } : null;
  }
}

function trainedNames(json: LogisticModelJson): string[] {
  return json.trained.map((p) => json.categories[p]);
}

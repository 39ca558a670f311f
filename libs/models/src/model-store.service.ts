import { Inject, Injectable } from '@nestjs/common';
import { Database, ModelVersionEntity } from '#database';
import {
  ConformalCalibration,
  IdfTable,
  LogisticModel,
  type ConformalCalibrationJson,
  type Featurizer,
  type FeaturizerOptions,
  type IdfTableJson,
  type LogisticModelJson,
  type SparseVector,
} from '#learning';
import { DeskFeaturesService } from './desk-features.service.js';
import { IdfWeights } from './idf-weights.js';
import { featurizerKey } from './term-counts.js';

/** A model version ready to score: classifier, the idf it was trained with, its calibration. */
export interface LoadedModel {
  deskId: number;
  version: number;
  state: ModelVersionEntity['state'];
  categories: string[];
  classifier: LogisticModel;
  idf: IdfTable;
  featurizer: Featurizer;
  /** {@link featurizerKey} of the featuriser: cached term counts with the same key can be weighed directly. */
  featurizerKey: string;
  calibration: ConformalCalibration;
  /** tf-idf of a text under this version (tokenises it). */
  vectorize(text: string): SparseVector;
  /** tf-idf of hashed term counts made by this version's featuriser. */
  weigh(counts: SparseVector): SparseVector;
}

const KEEP = 6;

/** Loads model versions and keeps the last few in memory (versions are immutable once written). */
@Injectable()
export class ModelStore {
  private readonly cache = new Map<string, LoadedModel>();
  private readonly loading = new Map<string, Promise<LoadedModel | null>>();

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
  ) {}

  async load(deskId: number, version: number): Promise<LoadedModel | null> {
    const key = `${deskId}:${version}`;
    const hit = this.cache.get(key);
    if (hit) {
      this.cache.delete(key);
      this.cache.set(key, hit);
      return hit;
    }
    // Chunks scored at the same time in one process share one read of the version.
    let pending = this.loading.get(key);
    if (!pending) {
      pending = this.read(deskId, version, key).finally(() => this.loading.delete(key));
      this.loading.set(key, pending);
    }
    return pending;
  }

  private async read(deskId: number, version: number, key: string): Promise<LoadedModel | null> {
    const row = await this.db.manager.findOneBy(ModelVersionEntity, { deskId, version });
    if (!row || !row.model) return null;
    const classifier = LogisticModel.fromJSON(row.model.classifier as LogisticModelJson);
    const idf = IdfTable.fromJSON(row.model.idf as IdfTableJson);
    // Versions written before the featuriser settings were stored used the defaults at the idf's size.
    const featurizer = this.features.featurizer(
      (row.model.featurizer as FeaturizerOptions | undefined) ?? idf.hashBits,
    );
    const weights = new IdfWeights(idf);
    const loaded: LoadedModel = {
      deskId,
      version,
      state: row.state,
      categories: [...classifier.categories],
      classifier,
      idf,
      featurizer,
      featurizerKey: featurizerKey(featurizer.options),
      calibration: ConformalCalibration.fromJSON(row.calibration.scores as ConformalCalibrationJson),
      vectorize: (text) => weights.weigh(featurizer.counts(text)),
      weigh: (counts) => weights.weigh(counts),
    };
    // Only finished versions are cached: a version still being written may change.
    if (row.state === 'scoring' || row.state === 'published') {
      this.cache.set(key, loaded);
      while (this.cache.size > KEEP) this.cache.delete(this.cache.keys().next().value as string);
    }
    return loaded;
  }
}

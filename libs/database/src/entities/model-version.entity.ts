import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

export const MODEL_STATES = ['training', 'scoring', 'published', 'superseded', 'failed'] as const;
export type ModelState = (typeof MODEL_STATES)[number];

/** Which verdicts a version learned from (training) or calibrated on. */
export interface VerdictSetSummary {
  /** Verdicts per category. */
  counts: Record<string, number>;
  /** Items per draw kind of their original draws (second opinions not counted): training never holds `random`, calibration only `random`. */
  draws: Record<string, number>;
  /** The items, ascending. */
  itemIds: number[];
  /** The items whose label is a supervisor's settlement, ascending (absent in versions trained before settlements existed). */
  settledItemIds?: number[];
  /**
   * SHA-256 of the items with their labels (`id<TAB>label` lines, ascending ids): two versions with the same digest
   * learned from the same labels. Absent in versions trained before it was recorded.
   */
  labelsDigest?: string;
}

/**
 * One trained classifier with its calibration and figures. Immutable once
 * published: later changes of the coverage target only re-read the stored
 * calibration scores.
 */
/** Where a desk's transferred first version came from (another desk's version), and what it could not carry. */
export interface ModelOrigin {
  deskId: number;
  deskName: string;
  version: number;
  /** Categories of this desk the transferred classifier never trained. */
  untrained: string[];
  /** Categories of the source the desk does not have (left out). */
  dropped: string[];
}

export class ModelVersionEntity {
  id!: number;
  deskId!: number;
  version!: number;
  parentVersion!: number | null;
  state!: ModelState;
  /** The retrain request that made it: a retried job finds its own version again. */
  jobKey!: string;
  /** The newest verdict id the version saw; later verdicts are not yet learned from. */
  verdictWatermark!: number;
  training!: VerdictSetSummary;
  /** Calibration items and the sorted nonconformity scores (ConformalCalibrationJson). */
  calibration!: VerdictSetSummary & { scores: unknown };
  /** The classifier and the idf table it was trained with; `origin` on a desk's first version when it came from another desk. */
  model!: { classifier: unknown; idf: unknown; featurizer: unknown; origin?: ModelOrigin } | null;
  metrics!: Record<string, unknown> | null;
  timings!: Record<string, number>;
  failure!: string | null;
  createdAt!: Date;
  publishedAt!: Date | null;
}

export const modelVersionSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<ModelVersionEntity>({
    name: 'ModelVersionEntity',
    target: ModelVersionEntity,
    tableName: 'model_versions',
    columns: {
      id: c.id(),
      deskId: c.int('desk_id'),
      version: c.int('version'),
      parentVersion: c.int('parent_version', true),
      state: c.varchar('state', 12),
      jobKey: c.varchar('job_key', 100),
      verdictWatermark: c.int('verdict_watermark'),
      training: c.json('training'),
      calibration: c.json('calibration'),
      model: c.json('model', true),
      metrics: c.json('metrics', true),
      timings: c.json('timings'),
      failure: c.text('failure', true),
      createdAt: c.time('created_at'),
      publishedAt: c.time('published_at', true),
    },
  });
};

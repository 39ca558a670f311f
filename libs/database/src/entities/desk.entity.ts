import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

export const CALIBRATION_MODES = ['marginal', 'per-category'] as const;
export type CalibrationMode = (typeof CALIBRATION_MODES)[number];
export const STRATEGIES = ['entropy', 'margin', 'least-confidence', 'set-size'] as const;
export type Strategy = (typeof STRATEGIES)[number];
export const SCORES = ['lac', 'aps'] as const;
export type ScoreKind = (typeof SCORES)[number];

/** A desk's retention periods in days (1–3650); null keeps. See the retention migration. */
export interface RetentionSettings {
  /** Decided items, counted from their last decision (verdict or settlement). */
  decidedAfterDays: number | null;
  /** Decided items labelled with this category, instead of `decidedAfterDays`. */
  categories: Record<string, number>;
  /** Items never decided, counted from their import. */
  openAfterDays: number | null;
}

export const RETENTION_DAYS_MAX = 3650;

/** A desk's stored retention periods with every member present (an absent period keeps). */
export function retentionOf(stored: Partial<RetentionSettings> | null | undefined): RetentionSettings {
  return {
    decidedAfterDays: stored?.decidedAfterDays ?? null,
    categories: { ...(stored?.categories ?? {}) },
    openAfterDays: stored?.openAfterDays ?? null,
  };
}

export class DeskEntity {
  id!: number;
  name!: string;
  /** Seed terms per category name, as the supervisor wrote them. */
  seedTerms!: Record<string, string[]>;
  coverageTarget!: number;
  calibration!: CalibrationMode;
  randomShare!: number;
  /** Share of leases drawn from the review lane (flagged items) once a version exists and a category is watched. */
  screenShare!: number;
  /** Share of decided items served again, to a different reviewer, for a second opinion. */
  secondOpinionShare!: number;
  /** Whether second opinions of the demo's simulated verdicts are served to people (off unless a supervisor asks). */
  serveSimulatedSecondOpinions!: boolean;
  leaseSeconds!: number;
  /** The model version reviewers are served from; null until the first model is published. */
  currentModelVersion!: number | null;
  /** Retrain after this many new verdicts… */
  retrainEvery!: number;
  /** …or this long after the first verdict not yet learned from, whichever comes first. */
  retrainAfterSeconds!: number;
  /** How the queue ranks items once a model exists. */
  strategy!: Strategy;
  /** Nonconformity score of the prediction sets. */
  score!: ScoreKind;
  /** Watched categories (names): an open item whose set holds one is flagged, else cleared. */
  watch!: string[];
  /** Coverage target per category name; a category without one uses `coverageTarget`. */
  coverageTargets!: Record<string, number>;
  /** Null: expected coverage; else the probability, over the calibration draws, that coverage reaches the target. */
  confidence!: number | null;
  /** Key of the HMAC that hashes the external ids and sources of erased items; made at the desk's first erasure. */
  erasureSalt!: string | null;
  /** Retention periods; `{}` in the database reads as no period. */
  retention!: Partial<RetentionSettings>;
  createdBy!: number;
  createdAt!: Date;
  updatedAt!: Date;
}

export const deskSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<DeskEntity>({
    name: 'DeskEntity',
    target: DeskEntity,
    tableName: 'desks',
    columns: {
      id: c.id(),
      name: c.varchar('name', 200),
      seedTerms: c.json('seed_terms'),
      coverageTarget: c.double('coverage_target'),
      calibration: c.varchar('calibration', 20),
      randomShare: c.double('random_share'),
      screenShare: c.double('screen_share'),
      secondOpinionShare: c.double('second_opinion_share'),
      serveSimulatedSecondOpinions: c.bool('serve_simulated_second_opinions'),
      leaseSeconds: c.int('lease_seconds'),
      currentModelVersion: c.int('current_model_version', true),
      retrainEvery: c.int('retrain_every'),
      retrainAfterSeconds: c.int('retrain_after_seconds'),
      strategy: c.varchar('strategy', 20),
      score: c.varchar('score', 3),
      watch: c.json('watch'),
      coverageTargets: c.json('coverage_targets'),
      confidence: c.double('confidence', true),
      erasureSalt: c.varchar('erasure_salt', 64, true),
      retention: c.json('retention'),
      createdBy: c.int('created_by'),
      createdAt: c.time('created_at'),
      updatedAt: c.time('updated_at'),
    },
  });
};

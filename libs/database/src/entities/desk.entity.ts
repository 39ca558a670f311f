import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

export const CALIBRATION_MODES = ['marginal', 'per-category'] as const;
export type CalibrationMode = (typeof CALIBRATION_MODES)[number];

export class DeskEntity {
  id!: number;
  name!: string;
  /** Seed terms per category name, as the supervisor wrote them. */
  seedTerms!: Record<string, string[]>;
  coverageTarget!: number;
  calibration!: CalibrationMode;
  randomShare!: number;
  leaseSeconds!: number;
  /** The model version reviewers are served from; null until the first model is published. */
  currentModelVersion!: number | null;
  createdBy!: number;
  createdAt!: Date;
  updatedAt!: Date;
}

export const deskSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<DeskEntity>({
    name: 'DeskEntity', target: DeskEntity, tableName: 'desks',
    columns: {
      id: c.id(),
      name: c.varchar('name', 200),
      seedTerms: c.json('seed_terms'),
      coverageTarget: c.double('coverage_target'),
      calibration: c.varchar('calibration', 20),
      randomShare: c.double('random_share'),
      leaseSeconds: c.int('lease_seconds'),
      currentModelVersion: c.int('current_model_version', true),
      createdBy: c.int('created_by'),
      createdAt: c.time('created_at'),
      updatedAt: c.time('updated_at'),
    },
  });
};

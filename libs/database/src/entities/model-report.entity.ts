import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

export const REPORT_STATES = ['writing', 'ready', 'failed'] as const;
export type ReportState = (typeof REPORT_STATES)[number];

/** The oversight report of one model version: its figures (canonical JSON) and the HTML page made from them. */
export class ModelReportEntity {
  id!: number;
  deskId!: number;
  version!: number;
  state!: ReportState;
  /** The figures as canonical JSON text (sorted keys, rounded numbers): byte-identical for the same data. */
  figures!: string | null;
  html!: string | null;
  /** SHA-256 of `figures`, hex: lets an auditor check a kept copy. */
  figuresSha256!: string | null;
  failure!: string | null;
  startedAt!: Date;
  generatedAt!: Date | null;
}

export const modelReportSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<ModelReportEntity>({
    name: 'ModelReportEntity',
    target: ModelReportEntity,
    tableName: 'model_reports',
    columns: {
      id: c.id(),
      deskId: c.int('desk_id'),
      version: c.int('version'),
      state: c.varchar('state', 10),
      figures: c.text('figures', true),
      html: c.text('html', true),
      figuresSha256: c.varchar('figures_sha256', 64, true),
      failure: c.text('failure', true),
      startedAt: c.time('started_at'),
      generatedAt: c.time('generated_at', true),
    },
  });
};

import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

export const IMPORT_STATES = ['receiving', 'queued', 'running', 'done', 'failed'] as const;
export type ImportState = (typeof IMPORT_STATES)[number];

export interface ImportRowError {
  row: number;
  reason: string;
}

export class ImportEntity {
  id!: string;
  deskId!: number;
  format!: 'ndjson' | 'csv' | 'json';
  fileName!: string | null;
  state!: ImportState;
  bytesReceived!: number;
  rowsRead!: number;
  imported!: number;
  duplicates!: number;
  rejected!: number;
  /** The first 1000 rejected rows. */
  errors!: ImportRowError[];
  /** Why the whole import failed, when it did. */
  failure!: string | null;
  /** The last row whose batch is committed: a retried job resumes after it. */
  rowsCommitted!: number;
  createdBy!: number;
  /** The column or key that holds a label, when the import has one. */
  labelField!: string | null;
  /** The draw of the labels' verdicts: `archive` (train only) or `random` (calibrate; stated a uniform sample). */
  labelDraw!: 'archive' | 'random' | null;
  /** Rows that became decided items with a verdict by the archive account. */
  labelled!: number;
  /** Who stated that the archive was a uniform sample of the same stream, and when (with `labelDraw` `random`). */
  uniformSampleBy!: number | null;
  uniformSampleAt!: Date | null;
  createdAt!: Date;
  startedAt!: Date | null;
  finishedAt!: Date | null;
}

export const importSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<ImportEntity>({
    name: 'ImportEntity',
    target: ImportEntity,
    tableName: 'imports',
    columns: {
      id: c.uuid(),
      deskId: c.int('desk_id'),
      format: c.varchar('format', 10),
      fileName: c.varchar('file_name', 255, true),
      state: c.varchar('state', 12),
      bytesReceived: {
        type: 'bigint',
        name: 'bytes_received',
        transformer: { to: (v: number) => v, from: (v: string | number) => Number(v) },
      },
      rowsRead: c.int('rows_read'),
      imported: c.int('imported'),
      duplicates: c.int('duplicates'),
      rejected: c.int('rejected'),
      errors: c.json('errors'),
      failure: c.text('failure', true),
      rowsCommitted: c.int('rows_committed'),
      createdBy: c.int('created_by'),
      labelField: c.varchar('label_field', 100, true),
      labelDraw: c.varchar('label_draw', 10, true),
      labelled: c.int('labelled'),
      uniformSampleBy: c.int('uniform_sample_by', true),
      uniformSampleAt: c.time('uniform_sample_at', true),
      createdAt: c.time('created_at'),
      startedAt: c.time('started_at', true),
      finishedAt: c.time('finished_at', true),
    },
  });
};

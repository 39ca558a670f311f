import { isoTime, named, z } from '#api-docs';
import { IMPORT_STATES } from '#database';

export const ImportStartedAnswer = named(
  'ImportStarted',
  z.strictObject({ importId: z.uuid().describe('read its progress at GET /api/imports/{importId}') }),
);

export const ImportAnswer = named(
  'Import',
  z.strictObject({
    id: z.uuid(),
    deskId: z.int(),
    format: z.enum(['ndjson', 'csv', 'json']),
    fileName: z.string().nullable(),
    state: z.enum(IMPORT_STATES),
    bytesReceived: z.int(),
    rowsRead: z.int(),
    imported: z.int(),
    duplicates: z.int(),
    rejected: z.int(),
    errors: z
      .array(z.strictObject({ row: z.int(), reason: z.string() }))
      .describe('rejected rows with their row numbers and reasons (the first ones)'),
    failure: z.string().nullable(),
    labels: z
      .strictObject({
        field: z.string().describe('the column or key that holds the labels'),
        draw: z
          .enum(['archive', 'random'])
          .describe('archive: the labels train and never calibrate; random: they calibrate (a stated uniform sample)'),
        labelled: z.int().describe('rows that became decided items with a verdict by the archive account'),
        uniformSample: z
          .strictObject({ statedBy: z.string(), statedAt: isoTime })
          .nullable()
          .describe('who stated that the archive is a uniform random sample of the same stream, and when'),
      })
      .nullable()
      .describe('null when the import names no label column'),
    createdAt: isoTime,
    startedAt: isoTime.nullable(),
    finishedAt: isoTime.nullable(),
  }),
);

export const ImportListAnswer = named('ImportList', z.strictObject({ imports: z.array(ImportAnswer) }));

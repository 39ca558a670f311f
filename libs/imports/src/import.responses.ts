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
    createdAt: isoTime,
    startedAt: isoTime.nullable(),
    finishedAt: isoTime.nullable(),
  }),
);

export const ImportListAnswer = named('ImportList', z.strictObject({ imports: z.array(ImportAnswer) }));

import { isoTime, named, z } from '#api-docs';
import { PredictionAnswer } from '#models';

export const LeaseGrantAnswer = named(
  'LeaseGrant',
  z.strictObject({
    lease: z.strictObject({ id: z.uuid(), expiresAt: isoTime }),
    item: z.strictObject({
      id: z.int(),
      text: z.string(),
      meta: z.record(z.string(), z.unknown()).describe('the import row’s other fields'),
      externalId: z.string().nullable(),
      source: z.string().nullable(),
      postedAt: isoTime.nullable(),
    }),
    highlights: z
      .array(z.strictObject({ start: z.int(), end: z.int(), category: z.string() }))
      .describe('seed-term matches: UTF-16 offsets [start, end) into the text'),
    prediction: PredictionAnswer.nullable().describe('the current model’s call; null before the first model'),
  }),
);

export const MyLeasesAnswer = named(
  'MyLeases',
  z.strictObject({ leases: z.array(z.strictObject({ id: z.uuid(), itemId: z.int(), expiresAt: isoTime })) }),
);

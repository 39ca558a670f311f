import { isoTime, named, z } from '#api-docs';
import { ERASED_BY } from '#database';

/** One erasure: what was asked and what was erased, as counts (never a text, an external id or a source). */
export const ErasureAnswer = named(
  'Erasure',
  z.strictObject({
    id: z.int(),
    deskId: z.int(),
    erasedBy: z.enum(ERASED_BY).describe("a supervisor's request, or the desk's retention period"),
    reason: z.string().nullable(),
    requestedBy: z.string().nullable().describe('the supervisor who asked; null for retention'),
    createdAt: isoTime,
    asked: z
      .strictObject({ externalIds: z.int(), sources: z.int(), itemIds: z.int() })
      .describe('how many selectors of each kind the request named'),
    erased: z.int().describe('items erased now'),
    byCategory: z.record(z.string(), z.int()).describe('items erased now, by their label (settled, else decided)'),
    unlabelled: z.int().describe('items erased now that had no label'),
    alreadyErased: z.int().describe('items the selectors matched that were erased before'),
  }),
);

export const OneErasureAnswer = named('OneErasure', z.strictObject({ erasure: ErasureAnswer }));
export const ErasureListAnswer = named('ErasureList', z.strictObject({ erasures: z.array(ErasureAnswer) }));

/** One desk's retention run: what went, or in a dry run what would go. */
export const RetentionRunAnswer = named(
  'RetentionRun',
  z.strictObject({
    run: z.strictObject({
      deskId: z.int(),
      dryRun: z.boolean(),
      at: isoTime.describe('the time the periods were measured against'),
      retention: z.strictObject({
        decidedAfterDays: z.int().nullable(),
        categories: z.record(z.string(), z.int()),
        openAfterDays: z.int().nullable(),
      }),
      items: z.int().describe('items erased (in a dry run: that would be)'),
      byCategory: z
        .record(z.string(), z.int())
        .describe('of those, decided items by label (settled, else decided); every category listed'),
      unlabelled: z.int().describe('decided items without a label (abstentions only)'),
      open: z.int().describe('items never decided, past openAfterDays'),
    }),
  }),
);

/** What the desk holds about one external id or source. */
export const SubjectAnswer = named(
  'Subject',
  z.strictObject({
    deskId: z.int(),
    selector: z.strictObject({ externalId: z.string().optional(), source: z.string().optional() }),
    at: isoTime,
    items: z.array(
      z.strictObject({
        id: z.int(),
        externalId: z.string().nullable().describe('null once erased (the tombstone’s keyed hash matched)'),
        source: z.string().nullable(),
        text: z.string().nullable().describe('null once erased'),
        meta: z.record(z.string(), z.unknown()).nullable(),
        postedAt: isoTime.nullable(),
        importedAt: isoTime,
        state: z.string(),
        erasedAt: isoTime.nullable(),
        erasedBy: z.enum(ERASED_BY).nullable(),
        verdicts: z.array(
          z.strictObject({
            id: z.int(),
            reviewer: z.string(),
            category: z.string().nullable(),
            abstain: z.boolean(),
            draw: z.string(),
            note: z.string().nullable(),
            modelVersion: z.int().nullable(),
            shownSet: z.array(z.string()).nullable(),
            createdAt: isoTime,
            undoneAt: isoTime.nullable(),
          }),
        ),
        settlements: z.array(
          z.strictObject({
            id: z.int(),
            category: z.string(),
            reason: z.string(),
            settledBy: z.string(),
            createdAt: isoTime,
          }),
        ),
        predictions: z.array(
          z.strictObject({ modelVersion: z.int(), probabilities: z.record(z.string(), z.number()) }),
        ),
      }),
    ),
  }),
);

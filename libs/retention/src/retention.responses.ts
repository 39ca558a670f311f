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

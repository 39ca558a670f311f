import { isoTime, named, z } from '#api-docs';

const share = z
  .strictObject({
    estimate: z.number().nullable().describe('null when no random verdict counts towards it'),
    lower: z.number(),
    upper: z.number(),
    n: z.int().describe('random verdicts it is taken over'),
  })
  .describe('a share with its Wilson 95 % interval');

const categoryFigures = z.strictObject({
  matches: z.int().describe('items that match the category’s seed terms'),
  precision: share.describe('of the random-draw items that match, the share reviewers put in the category'),
  recall: share.describe('of the random-draw items reviewers put in the category, the share that match'),
});

const figures = {
  items: z.int(),
  randomVerdicts: z.int().describe('random-draw items with a verdict (not abstained) that still hold their text'),
  perCategory: z.record(z.string(), categoryFigures),
};

/** Keyword counts per period, and how far they over- and under-count. */
export const KeywordCountsAnswer = named(
  'KeywordCounts',
  z.strictObject({
    period: z.enum(['day', 'week', 'month']),
    by: z.enum(['posted', 'imported']),
    computedAt: isoTime.nullable().describe('when the pool was last counted; null: not yet'),
    stale: z.boolean().describe('the seed terms changed after the last count, which is of the earlier terms'),
    itemsCounted: z.int(),
    undated: z.int().describe('items without a posting date, left out when by=posted'),
    categories: z.array(z.string()).describe('categories with seed terms'),
    periods: z.array(
      z.strictObject({ start: z.string().describe('first day of the period, YYYY-MM-DD (UTC)'), ...figures }),
    ),
    total: z.strictObject(figures).describe('the same over every period'),
    method: z.string(),
  }),
);

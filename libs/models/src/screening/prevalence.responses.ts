import { named, z } from '#api-docs';

/** Each category's share of each period's items, with its interval, method and sample. */
export const PrevalenceAnswer = named(
  'Prevalence',
  z.strictObject({
    modelVersion: z.int().nullable().describe('the version whose probabilities the estimates use; null before one'),
    period: z.enum(['day', 'week', 'month']),
    by: z.enum(['posted', 'imported']).describe('periods of the posting time or of the import time'),
    categories: z.array(z.string()),
    method: z.string().describe('how the figures are estimated, in words'),
    approximation: z.string().describe('the approximation the estimates make, in words'),
    undated: z.int().describe('items left out for want of a time of that kind (no posted time, with by=posted)'),
    periods: z.array(
      z.strictObject({
        start: z.string().describe('first day of the period (UTC), YYYY-MM-DD; weeks start on Monday'),
        items: z.int(),
        randomVerdicts: z.int().describe('items of the period decided on uniform random draws: the sample'),
        decided: z.int().describe('items decided on other draws, counted with their labels'),
        perCategory: z.record(
          z.string(),
          z.strictObject({
            share: z.number().nullable().describe('share of the period’s items in the category; null without a sample'),
            lower: z.number().describe('95 % interval'),
            upper: z.number(),
            method: z.enum(['ppi++', 'clopper-pearson', 'none', 'exact']),
            randomVerdicts: z.int(),
          }),
        ),
      }),
    ),
  }),
);

import { named, z } from '#api-docs';

const interval = {
  lower: z.number(),
  upper: z.number(),
};

/** Flagged and cleared open items under the current version, and what the cleared pile still holds. */
export const ScreeningAnswer = named(
  'Screening',
  z.strictObject({
    modelVersion: z.int().nullable(),
    watch: z.array(z.string()).describe('the watched categories the figures are about'),
    open: z.int().describe('open items (not decided; held ones included)'),
    flagged: z.int().describe('open items whose prediction set holds a watched category'),
    cleared: z.int().describe('open items whose set holds none'),
    unscored: z.int().describe('open items the current version has not scored (imported since)'),
    perCategory: z.record(
      z.string(),
      z.strictObject({
        target: z.number(),
        confidence: z.number().nullable().describe('null: expected coverage'),
        calibrationCount: z.int().describe('random verdicts of the category behind its threshold'),
        needMore: z.int().describe('more random verdicts of the category before any item can be cleared of it'),
        flagged: z.int().describe('open items whose set holds the category'),
        clearedExpectedMisses: z.strictObject({
          estimate: z.number().nullable().describe('null when no held-out random verdict fell in the cleared pile'),
          ...interval,
          method: z
            .enum(['ppi++', 'clopper-pearson', 'none', 'exact'])
            .describe(
              'ppi++: prediction-powered; clopper-pearson: from the verdicts alone; none: no verdict, bounds 0 and the pile; exact: empty pile',
            ),
          randomVerdicts: z.int().describe('held-out random verdicts whose item the current sets clear'),
          ofCategory: z.int().describe('of them, items of the category'),
        }),
        guarantee: z.string().describe('the promise and the estimate in one plain sentence'),
      }),
    ),
    keywordBaseline: z.strictObject({
      flagged: z.int().describe('open items that match a seed term'),
      recall: z.strictObject({
        estimate: z.number().nullable(),
        ...interval,
        randomVerdicts: z.int().describe('random verdicts of a watched category the recall is measured on'),
      }),
    }),
  }),
);

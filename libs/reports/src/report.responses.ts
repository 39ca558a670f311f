import { isoTime, named, z } from '#api-docs';
import { REPORT_STATES } from '#database';
import { AgreementAnswer } from '#verdicts';

export const ReportListAnswer = named(
  'ReportList',
  z.strictObject({
    reports: z.array(
      z.strictObject({
        version: z.int(),
        publishedAt: isoTime.nullable(),
        status: z.enum([...REPORT_STATES, 'pending']).describe('pending: the report job has not started yet'),
        generatedAt: isoTime.nullable(),
        figuresSha256: z.string().nullable().describe('SHA-256 of the report’s JSON, hex'),
        failure: z.string().nullable(),
      }),
    ),
  }),
);

const interval = z.strictObject({ lower: z.number(), upper: z.number() });
const coverageFigure = {
  checks: z.int(),
  covered: z.int(),
  coverage: z.number().nullable(),
  wilson: interval.nullable(),
  clopperPearson: interval.nullable(),
};
const verdictCounts = z.strictObject({
  total: z.int(),
  perCategory: z.array(z.strictObject({ category: z.string(), verdicts: z.int() })),
  draws: z.record(z.string(), z.int()),
});
const share = z.strictObject({ items: z.int(), share: z.number() });

/**
 * A model version's oversight report (`report.json`): canonical JSON, keys sorted, numbers rounded to 6 decimals,
 * absent members left out (the same data gives the same bytes). Times are ISO 8601 strings.
 */
export const ReportAnswer = named(
  'ModelReport',
  z.strictObject({
    format: z.literal('cribra-model-report'),
    formatVersion: z.literal(1),
    desk: z.strictObject({ id: z.int(), name: z.string(), categories: z.array(z.string()) }),
    version: z.strictObject({
      version: z.int(),
      parentVersion: z.int().nullable(),
      createdAt: z.string(),
      publishedAt: z.string(),
      verdictWatermark: z.int(),
      startedFrom: z
        .strictObject({
          deskId: z.int(),
          deskName: z.string(),
          version: z.int(),
          untrained: z.array(z.string()),
        })
        .optional()
        .describe('the other desk’s version this desk started from, when it did'),
    }),
    period: z.strictObject({
      from: z.string(),
      to: z.string(),
      startsAt: z.enum(['parent-published', 'desk-created']),
    }),
    settings: z.strictObject({
      coverageTarget: z.number(),
      calibration: z.enum(['marginal', 'per-category']),
      score: z.enum(['lac', 'aps']),
      strategy: z.string(),
      randomShare: z.number(),
      secondOpinionShare: z.number(),
    }),
    training: verdictCounts,
    calibration: verdictCounts,
    coverage: z.strictObject({
      promised: z.number(),
      mode: z.enum(['marginal', 'per-category']),
      checkedVersions: z.array(z.int()),
      overall: z.strictObject(coverageFigure),
      perCategory: z.array(z.strictObject({ category: z.string(), ...coverageFigure })),
    }),
    pool: z
      .strictObject({
        items: z.int(),
        meanSetSize: z.number(),
        setSizes: z.array(z.strictObject({ size: z.int(), items: z.int(), share: z.number() })),
        calls: z.strictObject({ sure: share, ambiguous: share, unfamiliar: share }),
      })
      .nullable(),
    quality: z
      .strictObject({
        calibrationItems: z.int(),
        accuracy: z.number(),
        macroF1: z.number(),
        logLoss: z.number(),
        brier: z.number(),
        ece: z.number(),
        reliability: z.array(
          z.strictObject({
            lower: z.number(),
            upper: z.number(),
            count: z.int(),
            meanConfidence: z.number().nullable(),
            accuracy: z.number().nullable(),
          }),
        ),
      })
      .nullable(),
    learningCurve: z.array(
      z.strictObject({
        version: z.int(),
        publishedAt: z.string(),
        calibrationItems: z.int(),
        macroF1: z.number().nullable(),
        accuracy: z.number().nullable(),
      }),
    ),
    agreement: AgreementAnswer,
    activity: z.strictObject({
      order: z.literal('name'),
      verdicts: z.int(),
      reviewers: z.array(
        z.strictObject({
          name: z.string(),
          verdicts: z.int(),
          abstained: z.int(),
          medianSeconds: z.number().nullable(),
        }),
      ),
    }),
    alerts: z.strictObject({
      window: z.int(),
      raisedAtEnd: z.boolean(),
      episodes: z.array(
        z.strictObject({
          raisedAt: z.string(),
          clearedAt: z.string().nullable(),
          checks: z.int(),
          coverage: z.number(),
          upper: z.number(),
          target: z.number(),
        }),
      ),
    }),
    settingsChanges: z.array(
      z.strictObject({
        at: z.string(),
        actor: z.string(),
        before: z.record(z.string(), z.unknown()),
        after: z.record(z.string(), z.unknown()),
      }),
    ),
    prevalence: z
      .strictObject({
        asOf: z.string(),
        modelVersion: z.int().nullable(),
        period: z.enum(['day', 'week', 'month']),
        by: z.enum(['posted', 'imported']),
        method: z.string(),
        approximation: z.string(),
        undated: z.int(),
        periods: z.array(
          z.strictObject({
            start: z.string(),
            items: z.int(),
            randomVerdicts: z.int(),
            decided: z.int(),
            perCategory: z.array(
              z.strictObject({
                category: z.string(),
                share: z.number().nullable(),
                lower: z.number(),
                upper: z.number(),
                method: z.enum(['ppi++', 'clopper-pearson', 'none', 'exact']),
                randomVerdicts: z.int(),
              }),
            ),
          }),
        ),
      })
      .nullable(),
  }),
);

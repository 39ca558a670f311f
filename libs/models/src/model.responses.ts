import { isoTime, named, z } from '#api-docs';
import { CALIBRATION_MODES, MODEL_STATES, SCORES, TRIAGE_CALLS } from '#database';

/** The model's call on an item as served: probabilities per category, the prediction set, the triage call. */
export const PredictionAnswer = named(
  'Prediction',
  z.strictObject({
    modelVersion: z.int(),
    probabilities: z.record(z.string(), z.number()).describe('probability per category name'),
    set: z.array(z.string()).describe('the prediction set at the desk’s coverage target'),
    call: z.enum(TRIAGE_CALLS),
  }),
);

/** The thresholds of a version at the desk's target, and the random verdicts each still needs. */
export const CalibrationStatusAnswer = named(
  'CalibrationStatus',
  z.strictObject({
    modelVersion: z.int(),
    target: z.number(),
    mode: z.enum(CALIBRATION_MODES),
    score: z.enum(SCORES),
    confidence: z
      .number()
      .nullable()
      .describe(
        'null: expected coverage; else the probability over the calibration draws that coverage reaches the target',
      ),
    thresholds: z.array(
      z.strictObject({
        category: z.string().nullable().describe('null for the one threshold of marginal calibration'),
        target: z.number().describe('the coverage target of this threshold: the category’s own, or the desk’s'),
        threshold: z.number().nullable().describe('null: too few random verdicts, the set is every category'),
        n: z.int().describe('calibration verdicts the threshold was read from'),
        heldOut: z.int().describe('calibration verdicts of the estimation fold left out (watched categories only)'),
        needMore: z.int(),
      }),
    ),
    needMore: z.int(),
  }),
);

const qualityFigures = z.strictObject({
  n: z.int(),
  accuracy: z.number(),
  macroF1: z.number(),
  logLoss: z.number(),
  brier: z.number(),
  ece: z.number(),
  reliability: z
    .array(
      z.strictObject({
        lower: z.number(),
        upper: z.number(),
        count: z.int(),
        meanConfidence: z.number().nullable().describe('null for an empty bin'),
        accuracy: z.number().nullable().describe('null for an empty bin'),
      }),
    )
    .optional()
    .describe('reliability diagram, 10 equal-width bins (versions trained before it was recorded have none)'),
});

/** Quality figures of a version on its calibration set, as stored with the version. */
export type QualityFigures = z.output<typeof qualityFigures>;

const modelSummary = {
  version: z.int(),
  parentVersion: z.int().nullable(),
  state: z.enum(MODEL_STATES),
  createdAt: isoTime,
  publishedAt: isoTime.nullable(),
  verdictWatermark: z.int(),
  trainingCounts: z.record(z.string(), z.int()),
  calibrationCounts: z.record(z.string(), z.int()),
  metrics: qualityFigures.nullable(),
  timings: z.record(z.string(), z.number()).describe('milliseconds per phase (loadMs, featurizeMs, trainMs, …)'),
  failure: z.string().nullable(),
};

export const ModelSummaryAnswer = named('ModelSummary', z.strictObject(modelSummary));

export const ModelListAnswer = named(
  'ModelList',
  z.strictObject({ currentModelVersion: z.int().nullable(), models: z.array(ModelSummaryAnswer) }),
);

const verdictSet = z.strictObject({
  counts: z.record(z.string(), z.int()),
  draws: z.record(z.string(), z.int()),
  items: z.array(z.int()),
});

export const ModelVersionAnswer = named(
  'ModelVersion',
  z.strictObject({
    ...modelSummary,
    training: verdictSet,
    calibration: verdictSet,
    thresholds: CalibrationStatusAnswer.nullable(),
  }),
);

const coverageSummary = {
  n: z.int(),
  covered: z.int(),
  coverage: z.number().nullable(),
  interval: z.strictObject({ lower: z.number(), upper: z.number() }).nullable().describe('Wilson 95 % interval'),
};
const coverageCell = z.strictObject(coverageSummary);

export const CoverageAnswer = named(
  'Coverage',
  z.strictObject({
    target: z.number(),
    mode: z.enum(CALIBRATION_MODES),
    byVersion: z.array(
      z.strictObject({ ...coverageSummary, modelVersion: z.int(), perCategory: z.record(z.string(), coverageCell) }),
    ),
    window: z.strictObject({ ...coverageSummary, size: z.int(), perCategory: z.record(z.string(), coverageCell) }),
    alert: z.strictObject({ raised: z.boolean(), message: z.string().nullable() }),
  }),
);

export const CoveragePreviewAnswer = named(
  'CoveragePreview',
  z.strictObject({
    modelVersion: z.int().nullable(),
    items: z.int().optional().describe('open items the preview covers (absent before the first model)'),
    mode: z.enum(CALIBRATION_MODES).optional(),
    points: z.array(
      z.strictObject({
        target: z.number(),
        sureShare: z.number(),
        ambiguousShare: z.number(),
        unfamiliarShare: z.number(),
        meanSetSize: z.number(),
        calibrationCount: z.int(),
        needMore: z.int(),
        setSizes: z.array(z.int()).describe('open items by set size (index = categories in the set)'),
      }),
    ),
  }),
);

export const PredictedItemsAnswer = named(
  'PredictedItems',
  z.strictObject({
    modelVersion: z.int().nullable(),
    items: z.array(
      z.strictObject({
        id: z.int(),
        text: z.string().optional(),
        externalId: z.string().nullable(),
        source: z.string().nullable(),
        prediction: PredictionAnswer,
      }),
    ),
    next: z.string().nullable().describe('pass as `after` for the next page; null on the last'),
    nextCursor: z.string().nullable().describe('the same as `next` (for clients that page with `cursor`)'),
  }),
);

/** A version's classifier as a file: see `ModelExportJson` in libs/learning (`model-export.ts`). */
export const ModelFileAnswer = named(
  'ModelFile',
  z.strictObject({
    type: z.literal('cribra.model-export'),
    version: z.literal(1).describe('format version'),
    source: z.strictObject({
      deskId: z.int(),
      deskName: z.string(),
      version: z.int(),
      publishedAt: z.string().nullable(),
    }),
    exportedAt: z.string(),
    categories: z.array(z.string()).describe('the desk’s categories, in its order'),
    featurizer: z
      .strictObject({
        hashBits: z.int(),
        maxWordNgram: z.union([z.literal(1), z.literal(2)]),
        charNgrams: z.tuple([z.int(), z.int()]).readonly().nullable(),
      })
      .describe('hashed featuriser settings (MurmurHash3 x86 32-bit)'),
    idf: z
      .strictObject({
        type: z.literal('cribra.idf-table'),
        version: z.literal(1),
        hashBits: z.int(),
        documentCount: z.int(),
        indices: z.array(z.int()).describe('buckets with a non-zero document frequency, ascending'),
        df: z.array(z.int()),
      })
      .describe('document frequencies of the pool the version was trained on'),
    classifier: z
      .strictObject({
        type: z.literal('cribra.logistic-model'),
        version: z.union([z.literal(1), z.literal(2)]).describe('2: multinomial (softmax); 1: one-vs-rest'),
        categories: z.array(z.string()),
        trained: z.array(z.int()).describe('positions in categories of the trained categories'),
        hashBits: z.int(),
        features: z.array(z.int()).describe('buckets that carry weights, ascending'),
        weights: z.array(z.array(z.number())).describe('weights[c][j]: class trained[c] on bucket features[j]'),
        biases: z.array(z.number()).describe('intercept of each trained class'),
        training: z.record(z.string(), z.unknown()).describe('the solver’s summary (method, C, iterations, …)'),
      })
      .describe('the classifier'),
  }),
);

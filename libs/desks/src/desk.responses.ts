import { isoTime, named, z } from '#api-docs';
import { CALIBRATION_MODES, MEMBER_ROLES, SCORES, STRATEGIES } from '#database';
import { CalibrationStatusAnswer } from '#models';

/** A desk with its categories, seed terms and settings. */
export const DeskAnswer = named(
  'Desk',
  z.strictObject({
    id: z.int(),
    name: z.string(),
    categories: z.array(z.strictObject({ id: z.int(), name: z.string(), position: z.int() })),
    seedTerms: z.record(z.string(), z.array(z.string())).describe('seed terms per category name'),
    coverageTarget: z.number(),
    coverageTargets: z
      .record(z.string(), z.number())
      .describe('coverage target per category name; the others use coverageTarget'),
    calibration: z.enum(CALIBRATION_MODES),
    confidence: z
      .number()
      .nullable()
      .describe(
        'null: expected coverage; else the probability over the calibration draws that coverage reaches the target',
      ),
    watch: z.array(z.string()).describe('watched categories: an open item whose set holds one is flagged'),
    randomShare: z.number(),
    screenShare: z
      .number()
      .describe('share of leases from the review lane (flagged items) once a version exists and a category is watched'),
    secondOpinionShare: z.number(),
    serveSimulatedSecondOpinions: z
      .boolean()
      .describe('whether second opinions of the demo’s simulated verdicts are served to people'),
    leaseSeconds: z.int(),
    strategy: z.enum(STRATEGIES),
    score: z.enum(SCORES),
    retrainEvery: z.int(),
    retrainAfterSeconds: z.int(),
    retention: z
      .strictObject({
        decidedAfterDays: z.int().nullable().describe('decided items go this many days after their last decision'),
        categories: z.record(z.string(), z.int()).describe('a period per category for decided items with that label'),
        openAfterDays: z.int().nullable().describe('items never decided go this many days after their import'),
      })
      .describe('retention periods in days; null keeps'),
    currentModelVersion: z.int().nullable(),
    createdAt: isoTime,
    updatedAt: isoTime,
    role: z
      .enum(MEMBER_ROLES)
      .nullable()
      .describe('the caller’s role on this desk; null for an admin who is not a member'),
  }),
);

/** A desk after a change; a change of target, calibration or strategy also says how each threshold now stands. */
export const UpdatedDeskAnswer = named(
  'UpdatedDesk',
  DeskAnswer.extend({
    calibrationStatus: CalibrationStatusAnswer.nullable()
      .optional()
      .describe(
        'present when a target, the calibration, the confidence, the watched categories or the strategy changed; null before the first model',
      ),
  }),
);

/** A new desk; one started from another desk's version says what the transfer carried. */
export const CreatedDeskAnswer = named(
  'CreatedDesk',
  DeskAnswer.extend({
    startedFrom: z
      .strictObject({
        deskId: z.int(),
        deskName: z.string(),
        version: z.int(),
        untrained: z
          .array(z.string())
          .describe(
            'categories of the new desk the classifier never trained: probability 0 until own verdicts train them',
          ),
        dropped: z.array(z.string()).describe('trained categories of the source that the new desk does not have'),
      })
      .optional()
      .describe('present when the desk started from another desk’s model version'),
  }),
);

export const DeskListAnswer = named('DeskList', z.strictObject({ desks: z.array(DeskAnswer) }));

import { applyDecorators } from '@nestjs/common';
import { ApiQuery } from '@nestjs/swagger';
import { isoTime, named, z } from '#api-docs';
import { ERASED_BY, TRIAGE_CALLS, VERDICT_DRAW_KINDS } from '#database';
import { LeaseGrantAnswer } from '#leases';

/** A verdict with the model version and the set that were shown when it was given. */
export const VerdictAnswer = named(
  'Verdict',
  z.strictObject({
    id: z.int(),
    deskId: z.int(),
    itemId: z.int(),
    reviewer: z.string(),
    category: z.string().nullable().describe('null for an abstention'),
    abstain: z.boolean(),
    clientId: z.string(),
    modelVersion: z.int().nullable(),
    shownSet: z.array(z.string()).nullable(),
    shownCall: z.enum(TRIAGE_CALLS).nullable(),
    elapsedMs: z.int().nullable(),
    note: z.string().nullable(),
    simulated: z.boolean(),
    createdAt: isoTime,
    undoneAt: isoTime.nullable(),
  }),
);

export const OneVerdictAnswer = named('OneVerdict', z.strictObject({ verdict: VerdictAnswer }));
export const UndoneVerdictAnswer = named(
  'UndoneVerdict',
  z.strictObject({
    verdict: VerdictAnswer,
    lease: LeaseGrantAnswer.nullable()
      .optional()
      .describe('with reopen=true: the same item, leased again to this reviewer; null when it could not be'),
  }),
);
export const VerdictCountAnswer = named(
  'VerdictCount',
  z.strictObject({
    since: isoTime,
    count: z.int().describe('this reviewer’s verdicts on the desk since then, undone ones left out'),
  }),
);
export const VerdictListAnswer = named('VerdictList', z.strictObject({ verdicts: z.array(VerdictAnswer) }));

/** A verdict in a desk's list for supervisors and auditors: with the draw that served the item (never shown to reviewers). */
export const DeskVerdictAnswer = named(
  'DeskVerdict',
  z.strictObject({
    ...VerdictAnswer.shape,
    draw: z.enum(VERDICT_DRAW_KINDS).describe('why the item was served to this reviewer'),
    itemErasedAt: isoTime.nullable().describe('when the item was erased; null while it holds its text'),
  }),
);
export const DeskVerdictListAnswer = named('DeskVerdictList', z.strictObject({ verdicts: z.array(DeskVerdictAnswer) }));

/** One item for oversight, without its text: verdicts with their draws, settlements, and each version's call. */
export const ItemRecordAnswer = named(
  'ItemRecord',
  z.strictObject({
    id: z.int(),
    deskId: z.int(),
    externalId: z.string().nullable().describe('null once erased'),
    source: z.string().nullable().describe('null once erased'),
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
        draw: z.enum(VERDICT_DRAW_KINDS),
        modelVersion: z.int().nullable(),
        shownSet: z.array(z.string()).nullable(),
        shownCall: z.enum(TRIAGE_CALLS).nullable(),
        elapsedMs: z.int().nullable(),
        note: z.string().nullable(),
        simulated: z.boolean(),
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
    calls: z
      .array(
        z.strictObject({
          modelVersion: z.int(),
          current: z.boolean().describe('the version in service'),
          computed: z.boolean().describe('true: the version never scored the item; its call is computed now'),
          probabilities: z.record(z.string(), z.number()),
          set: z.array(z.string()).describe('the prediction set at the desk’s coverage target and mode now'),
          call: z.enum(TRIAGE_CALLS),
        }),
      )
      .describe('each version that holds the item’s probabilities, and the version in service'),
  }),
);

/** An item's text, handed out on request and recorded as a read in the audit trail. */
export const ItemTextAnswer = named(
  'ItemText',
  z.strictObject({
    itemId: z.int(),
    text: z.string().nullable().describe('null once erased (nothing is then recorded)'),
    highlights: z
      .array(z.strictObject({ start: z.int(), end: z.int(), category: z.string() }))
      .describe('seed-term matches: UTF-16 offsets [start, end) into the text'),
    erasedAt: isoTime.nullable(),
  }),
);

export const ProgressAnswer = named(
  'Progress',
  z.strictObject({
    deskId: z.int(),
    items: z.strictObject({
      total: z.int(),
      open: z.int(),
      leased: z.int(),
      decided: z.int(),
      erased: z.int().describe('items whose text was erased (left out of the other counts)'),
    }),
    verdicts: z.strictObject({
      total: z.int(),
      byCategory: z.record(z.string(), z.int()),
      abstain: z.int(),
      byDraw: z.record(z.string(), z.int()),
      undone: z.int(),
    }),
    reviewersActiveLastHour: z.int(),
    reviewers: z
      .array(z.strictObject({ name: z.string(), verdicts: z.int(), lastAt: isoTime.nullable() }))
      .optional()
      .describe('per reviewer, for supervisors and auditors only'),
    currentModelVersion: z.int().nullable(),
  }),
);

export const AgreementAnswer = named(
  'Agreement',
  z.strictObject({
    deskId: z.int(),
    items: z.int(),
    verdicts: z.int(),
    abstentions: z.int(),
    reviewers: z.int(),
    cohen: z.array(
      z.strictObject({
        reviewers: z.tuple([z.string(), z.string()]),
        items: z.int(),
        kappa: z.number().nullable(),
        observed: z.number(),
        expected: z.number(),
      }),
    ),
    fleiss: z.strictObject({
      kappa: z.number().nullable(),
      observed: z.number().nullable(),
      expected: z.number().nullable(),
      items: z.int(),
      itemsLeftOut: z.int(),
      verdictsPerItem: z.int().nullable(),
      verdicts: z.int(),
      unequalVerdicts: z.string(),
    }),
    krippendorff: z.strictObject({
      level: z.literal('nominal'),
      alpha: z.number().nullable(),
      observedDisagreement: z.number().nullable(),
      expectedDisagreement: z.number().nullable(),
      interval: z.strictObject({
        lower: z.number().nullable(),
        upper: z.number().nullable(),
        confidence: z.number(),
        resamples: z.int(),
        seed: z.int(),
        undefinedResamples: z.int(),
      }),
      items: z.int(),
      pairableValues: z.int(),
    }),
    perCategory: z.array(
      z.strictObject({ category: z.string(), verdicts: z.int(), items: z.int(), fleissKappa: z.number().nullable() }),
    ),
  }),
);

export const SettlementAnswer = named(
  'Settlement',
  z.strictObject({
    id: z.int(),
    itemId: z.int(),
    category: z.string(),
    reason: z.string(),
    settledBy: z.string(),
    settledAt: isoTime,
  }),
);

export const SettledAnswer = named('Settled', z.strictObject({ settlement: SettlementAnswer }));

export const DisagreementListAnswer = named(
  'DisagreementList',
  z.strictObject({
    disagreements: z.array(
      z.strictObject({
        item: z.strictObject({
          id: z.int(),
          externalId: z.string().nullable(),
          text: z.string().nullable().describe('null once the item was erased'),
          erasedAt: isoTime.nullable().describe('when the text, metadata, external id and source were erased'),
        }),
        verdicts: z.array(
          z.strictObject({
            id: z.int(),
            reviewer: z.string(),
            category: z.string().nullable(),
            abstain: z.boolean(),
            draw: z.enum(VERDICT_DRAW_KINDS),
            createdAt: isoTime,
            undoneAt: isoTime.nullable(),
            modelVersion: z.int().nullable(),
            shownCall: z.string().nullable(),
          }),
        ),
        reasons: z.array(
          z.discriminatedUnion('kind', [
            z.strictObject({ kind: z.literal('reviewers-differ'), categories: z.array(z.string()) }),
            z.strictObject({
              kind: z.literal('against-sure-call'),
              verdictId: z.int(),
              modelVersion: z.int(),
              shownSet: z.array(z.string()),
              category: z.string(),
            }),
          ]),
        ),
        settled: SettlementAnswer.nullable().describe('the settlement that counts (the latest)'),
        settlements: z.array(SettlementAnswer),
      }),
    ),
    next: z.int().nullable().describe('pass as `after` for the next page; null on the last'),
  }),
);

/** The filters of the verdict list and the decision trail, as query parameters (all optional). */
export function ApiVerdictFilters() {
  return applyDecorators(
    ApiQuery({ name: 'reviewer', required: false, type: String, description: 'a reviewer’s account name' }),
    ApiQuery({
      name: 'reviewerMatch',
      required: false,
      type: String,
      description: 'part of a reviewer’s name, any case: verdicts of every reviewer whose name holds it',
    }),
    ApiQuery({ name: 'category', required: false, type: String, description: 'a category name, or `abstain`' }),
    ApiQuery({
      name: 'from',
      required: false,
      type: String,
      description: 'ISO 8601 date or date-time, inclusive (2026-01-31 or 2026-01-31T12:00:00Z)',
    }),
    ApiQuery({ name: 'to', required: false, type: String, description: 'ISO 8601 date or date-time, exclusive' }),
  );
}

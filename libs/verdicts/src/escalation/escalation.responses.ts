import { isoTime, named, z } from '#api-docs';

/** One item marked urgent and not yet acknowledged. */
export const UrgentItemAnswer = named(
  'UrgentItem',
  z.strictObject({
    escalationId: z.int(),
    itemId: z.int(),
    externalId: z.string().nullable(),
    text: z.string().describe('the item’s text; "-" once erased'),
    erased: z.boolean(),
    reason: z.string().describe('the reviewer’s short reason'),
    raisedBy: z.string().describe('the reviewer’s name'),
    raisedAt: isoTime,
    category: z.string().nullable().describe('the verdict given with it; null for an abstention'),
  }),
);

export const UrgentListAnswer = named(
  'UrgentList',
  z.strictObject({
    waiting: z.int().describe('items marked urgent that no supervisor has acknowledged yet'),
    items: z.array(UrgentItemAnswer).describe('those items, the most recent first'),
  }),
);

export const AcknowledgedAnswer = named(
  'Acknowledged',
  z.strictObject({
    itemId: z.int(),
    escalationIds: z.array(z.int()).describe('every waiting escalation of the item, now acknowledged'),
    acknowledgedBy: z.string(),
    acknowledgedAt: isoTime,
  }),
);

import { isoTime, named, z } from '#api-docs';

export const HealthAnswer = named('Health', z.strictObject({ status: z.literal('ok') }));

export const ReadyAnswer = named(
  'Ready',
  z.strictObject({
    status: z.literal('ready'),
    database: z.literal(true),
    redis: z.literal(true),
    dialect: z.enum(['sqlite', 'postgres']),
  }),
);

export const AuditListAnswer = named(
  'AuditList',
  z.strictObject({
    events: z.array(
      z.strictObject({
        id: z.int(),
        at: isoTime.nullable(),
        actorId: z.int().nullable(),
        actor: z.string(),
        action: z.string().describe('desk.update, verdict.create, …'),
        entityType: z.string(),
        entityId: z.string(),
        deskId: z.int().nullable(),
        before: z.unknown().describe('the changed fields before, or null'),
        after: z.unknown().describe('the changed fields after, or null'),
      }),
    ),
  }),
);

import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

/** One line of the append-only audit trail (the database refuses updates and deletes). */
export class AuditEventEntity {
  id!: number;
  at!: Date;
  actorId!: number | null;
  actorName!: string;
  action!: string;
  entityType!: string;
  entityId!: string;
  deskId!: number | null;
  before!: Record<string, unknown> | null;
  after!: Record<string, unknown> | null;
}

export const auditEventSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<AuditEventEntity>({
    name: 'AuditEventEntity',
    target: AuditEventEntity,
    tableName: 'audit_events',
    columns: {
      id: c.id(),
      at: c.time('at'),
      actorId: c.int('actor_id', true),
      actorName: c.varchar('actor_name', 100),
      action: c.varchar('action', 60),
      entityType: c.varchar('entity_type', 40),
      entityId: c.varchar('entity_id', 100),
      deskId: c.int('desk_id', true),
      before: c.json('before', true),
      after: c.json('after', true),
    },
  });
};

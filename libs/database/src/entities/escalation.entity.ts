import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

/** An item a reviewer marked urgent with a verdict, until a supervisor acknowledges it. */
export class EscalationEntity {
  id!: number;
  deskId!: number;
  itemId!: number;
  verdictId!: number;
  reason!: string;
  raisedBy!: number;
  raisedAt!: Date;
  acknowledgedBy!: number | null;
  acknowledgedAt!: Date | null;
}

export const escalationSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<EscalationEntity>({
    name: 'EscalationEntity',
    target: EscalationEntity,
    tableName: 'escalations',
    columns: {
      id: c.id(),
      deskId: c.int('desk_id'),
      itemId: c.int('item_id'),
      verdictId: c.int('verdict_id'),
      reason: c.text('reason'),
      raisedBy: c.int('raised_by'),
      raisedAt: c.time('raised_at'),
      acknowledgedBy: c.int('acknowledged_by', true),
      acknowledgedAt: c.time('acknowledged_at', true),
    },
  });
};

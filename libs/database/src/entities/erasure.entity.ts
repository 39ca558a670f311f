import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';
import type { ErasedBy } from './item.entity.js';

/** How many selectors an erasure request named, per kind. */
export interface ErasureAsked {
  externalIds: number;
  sources: number;
  itemIds: number;
}

/** What an erasure did. `byCategory` counts erased items by label; `unlabelled` those without one. */
export interface ErasureOutcome {
  erased: number;
  byCategory: Record<string, number>;
  unlabelled: number;
  /** Items the selectors matched that an earlier erasure had erased already. */
  alreadyErased: number;
}

/** One erasure: on a supervisor's request (with a reason) or by the desk's retention period. Counts only, no texts. */
export class ErasureEntity {
  id!: number;
  deskId!: number;
  erasedBy!: ErasedBy;
  reason!: string | null;
  requestedBy!: number | null;
  createdAt!: Date;
  asked!: ErasureAsked;
  counts!: ErasureOutcome;
}

export const erasureSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<ErasureEntity>({
    name: 'ErasureEntity',
    target: ErasureEntity,
    tableName: 'erasures',
    columns: {
      id: c.id(),
      deskId: c.int('desk_id'),
      erasedBy: c.varchar('erased_by', 10),
      reason: c.text('reason', true),
      requestedBy: c.int('requested_by', true),
      createdAt: c.time('created_at'),
      asked: c.json('asked'),
      counts: c.json('counts'),
    },
  });
};

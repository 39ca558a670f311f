import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

/** Why an item was served. Recorded on the lease and the verdict; never shown to the reviewer. */
export const DRAW_KINDS = ['seed', 'uncertainty', 'random', 'second-opinion', 'screen'] as const;
export type DrawKind = (typeof DRAW_KINDS)[number];
/**
 * A verdict's draw: a lease's, or `archive` for a label imported from an archive (trains, never calibrates). An
 * archive stated to be a uniform sample of the same stream gives `random` verdicts instead.
 */
export const VERDICT_DRAW_KINDS = [...DRAW_KINDS, 'archive'] as const;
export type VerdictDrawKind = (typeof VERDICT_DRAW_KINDS)[number];

export const TRIAGE_CALLS = ['sure', 'ambiguous', 'unfamiliar'] as const;
export type TriageCall = (typeof TRIAGE_CALLS)[number];

/** What the reviewer was shown with the item: the prediction of one model version. */
export interface ShownPrediction {
  modelVersion: number;
  probabilities: Record<string, number>;
  set: string[];
  call: TriageCall;
}

export class LeaseEntity {
  id!: string;
  deskId!: number;
  itemId!: number;
  reviewerId!: number;
  draw!: DrawKind;
  prediction!: ShownPrediction | null;
  createdAt!: Date;
  expiresAt!: Date;
  /** When the lease ended by a verdict or a hand-back; null while open (or merely expired). */
  closedAt!: Date | null;
  closedReason!: 'verdict' | 'returned' | null;
}

export const leaseSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<LeaseEntity>({
    name: 'LeaseEntity',
    target: LeaseEntity,
    tableName: 'leases',
    columns: {
      id: c.uuid(),
      deskId: c.int('desk_id'),
      itemId: c.int('item_id'),
      reviewerId: c.int('reviewer_id'),
      draw: c.varchar('draw', 20),
      prediction: c.json('prediction', true),
      createdAt: c.time('created_at'),
      expiresAt: c.time('expires_at'),
      closedAt: c.time('closed_at', true),
      closedReason: c.varchar('closed_reason', 10, true),
    },
  });
};

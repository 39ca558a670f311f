import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';
import type { VerdictDrawKind, TriageCall } from './lease.entity.js';

export class VerdictEntity {
  id!: number;
  deskId!: number;
  itemId!: number;
  reviewerId!: number;
  leaseId!: string | null;
  /** Client-supplied idempotency key, unique per reviewer. */
  clientId!: string;
  categoryId!: number | null;
  abstain!: boolean;
  draw!: VerdictDrawKind;
  /** What was shown with the item; all null when no model existed yet. */
  modelVersion!: number | null;
  shownSet!: string[] | null;
  shownCall!: TriageCall | null;
  shownProbabilities!: Record<string, number> | null;
  elapsedMs!: number | null;
  note!: string | null;
  simulated!: boolean;
  createdAt!: Date;
  undoneAt!: Date | null;
}

export const verdictSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<VerdictEntity>({
    name: 'VerdictEntity',
    target: VerdictEntity,
    tableName: 'verdicts',
    columns: {
      id: c.id(),
      deskId: c.int('desk_id'),
      itemId: c.int('item_id'),
      reviewerId: c.int('reviewer_id'),
      leaseId: c.varchar('lease_id', 36, true),
      clientId: c.varchar('client_id', 100),
      categoryId: c.int('category_id', true),
      abstain: c.bool('abstain'),
      draw: c.varchar('draw', 20),
      modelVersion: c.int('model_version', true),
      shownSet: c.json('shown_set', true),
      shownCall: c.varchar('shown_call', 12, true),
      shownProbabilities: c.json('shown_probabilities', true),
      elapsedMs: c.int('elapsed_ms', true),
      note: c.text('note', true),
      simulated: c.bool('simulated'),
      createdAt: c.time('created_at'),
      undoneAt: c.time('undone_at', true),
    },
  });
};

import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

/** `leased` items stay leased after the lease expires, until someone else is handed them. */
export const ITEM_STATES = ['open', 'leased', 'decided'] as const;
export type ItemState = (typeof ITEM_STATES)[number];
/** Who erased an item: a supervisor's request, or the desk's retention period. */
export const ERASED_BY = ['request', 'retention'] as const;
export type ErasedBy = (typeof ERASED_BY)[number];

export class ItemEntity {
  id!: number;
  deskId!: number;
  importId!: string | null;
  externalId!: string | null;
  source!: string | null;
  /** The text exactly as received. */
  text!: string;
  /** NFKC, case-folded, whitespace-collapsed form, kept for de-duplication. */
  normalizedText!: string;
  normalizedHash!: string;
  meta!: Record<string, unknown>;
  /** The item's own timestamp (`created_at` of the import row), if it had one. */
  postedAt!: Date | null;
  importedAt!: Date;
  state!: ItemState;
  /** Number of seed-term matches, for the cold start. */
  seedHits!: number;
  /** Queue priority: higher is served first. */
  priority!: number;
  /** The model version the priority comes from; null for the cold-start (seed) priority. */
  priorityModelVersion!: number | null;
  /** Uniform key in [0, 1) for uniform random draws by index. */
  randKey!: number;
  leaseId!: string | null;
  leasedUntil!: Date | null;
  /** When the text, metadata, external id and source were erased; null while the item holds them. */
  erasedAt!: Date | null;
  erasedBy!: ErasedBy | null;
  /** The erased external id and source, HMAC-SHA256 with the desk's salt (hex), so a subject can still be found. */
  externalIdHash!: string | null;
  sourceHash!: string | null;
}

export const itemSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<ItemEntity>({
    name: 'ItemEntity',
    target: ItemEntity,
    tableName: 'items',
    columns: {
      id: c.id(),
      deskId: c.int('desk_id'),
      importId: c.varchar('import_id', 36, true),
      externalId: c.varchar('external_id', 200, true),
      source: c.varchar('source', 200, true),
      text: c.text('text'),
      normalizedText: c.text('normalized_text'),
      normalizedHash: c.varchar('normalized_hash', 64),
      meta: c.json('meta'),
      postedAt: c.time('posted_at', true),
      importedAt: c.time('imported_at'),
      state: c.varchar('state', 10),
      seedHits: c.int('seed_hits'),
      priority: c.double('priority'),
      priorityModelVersion: c.int('priority_model_version', true),
      randKey: c.double('rand_key'),
      leaseId: c.varchar('lease_id', 36, true),
      leasedUntil: c.time('leased_until', true),
      erasedAt: c.time('erased_at', true),
      erasedBy: c.varchar('erased_by', 10, true),
      externalIdHash: c.varchar('external_id_hash', 64, true),
      sourceHash: c.varchar('source_hash', 64, true),
    },
  });
};

import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database, type DbInt, type InsertColumn } from '#database';
import {
  createFeaturizer,
  DEFAULT_HASH_BITS,
  IdfTable,
  type Featurizer,
  type FeaturizerOptions,
  type IdfTableJson,
} from '#learning';
import { encodeTermCounts, featurizerKey } from './term-counts.js';

const TERM_COUNT_COLUMNS: InsertColumn[] = [
  { name: 'item_id', pgType: 'integer' },
  { name: 'featurizer', pgType: 'text' },
  { name: 'counts', pgType: 'bytea' },
];

/**
 * Each desk's document frequencies over its pool, for tf-idf: counted as
 * items are imported, in the import batch's own transaction, so the table
 * always matches the items that landed. The same pass keeps each item's
 * hashed term counts (`item_term_counts`), so scoring need not tokenise again.
 */
@Injectable()
export class DeskFeaturesService {
  private readonly featurizers = new Map<string, Featurizer>();

  constructor(@Inject(Database) private readonly db: Database) {}

  /** The featuriser with these settings (default settings at `hashBits`), made once per process (each holds a 2^hashBits scratch table). */
  featurizer(options: number | FeaturizerOptions = DEFAULT_HASH_BITS): Featurizer {
    const wanted = typeof options === 'number' ? { hashBits: options } : options;
    const key = JSON.stringify([
      wanted.hashBits ?? DEFAULT_HASH_BITS,
      wanted.maxWordNgram ?? null,
      wanted.charNgrams === undefined ? 'default' : wanted.charNgrams,
    ]);
    let f = this.featurizers.get(key);
    if (!f) {
      f = createFeaturizer(wanted);
      this.featurizers.set(key, f);
    }
    return f;
  }

  /**
   * Adds newly imported items to a desk's table and stores their term counts,
   * within a write transaction (the table's row is locked on PostgreSQL).
   */
  async addItems(m: EntityManager, deskId: number, items: ReadonlyArray<{ id: number; text: string }>): Promise<void> {
    if (items.length === 0) return;
    const lock = this.db.lockRows();
    const row = await this.db.queryOne<{ hash_bits: DbInt; df: string }>(
      m,
      `SELECT hash_bits, df FROM desk_features WHERE desk_id = $1${lock}`,
      [deskId],
    );
    const table = row ? IdfTable.fromJSON(JSON.parse(row.df) as IdfTableJson) : IdfTable.create(DEFAULT_HASH_BITS);
    const f = this.featurizer(table.hashBits);
    const key = featurizerKey(f.options);
    const cached: unknown[][] = [];
    for (const it of items) {
      const counts = f.counts(it.text);
      table.addDocument(counts);
      cached.push([it.id, key, encodeTermCounts(counts)]);
    }
    const json = JSON.stringify(table.toJSON());
    const now = this.db.time(new Date());
    if (row)
      await this.db.query(
        m,
        'UPDATE desk_features SET document_count = $1, df = $2, updated_at = $3 WHERE desk_id = $4',
        [table.documentCount, json, now, deskId],
      );
    else
      await this.db.query(
        m,
        'INSERT INTO desk_features (desk_id, hash_bits, document_count, df, updated_at) VALUES ($1, $2, $3, $4, $5)',
        [deskId, table.hashBits, table.documentCount, json, now],
      );
    await this.storeCounts(m, cached);
  }

  /**
   * Takes erased items out of a desk's table, within the erasure's write transaction: their texts are counted again
   * with the featuriser {@link addItems} used (the table's), so each bucket loses exactly what the import added, and
   * their stored term counts are deleted. Later versions weigh terms as if the items had never been imported.
   */
  async removeItems(
    m: EntityManager,
    deskId: number,
    items: ReadonlyArray<{ id: number; text: string }>,
  ): Promise<void> {
    if (items.length === 0) return;
    const lock = this.db.lockRows();
    const row = await this.db.queryOne<{ df: string }>(m, `SELECT df FROM desk_features WHERE desk_id = $1${lock}`, [
      deskId,
    ]);
    if (row) {
      const table = IdfTable.fromJSON(JSON.parse(row.df) as IdfTableJson);
      const f = this.featurizer(table.hashBits);
      for (const it of items) table.removeDocument(f.counts(it.text));
      await this.db.query(
        m,
        'UPDATE desk_features SET document_count = $1, df = $2, updated_at = $3 WHERE desk_id = $4',
        [table.documentCount, JSON.stringify(table.toJSON()), this.db.time(new Date()), deskId],
      );
    }
    const ids = items.map((it) => it.id);
    await this.db.query(
      m,
      `DELETE FROM item_term_counts WHERE item_id IN (${ids.map((_, i) => `$${i + 1}`).join(', ')})`,
      ids,
    );
  }

  /** Stores term counts `[itemId, featurizerKey, encoded]`; rows already there stay as they are. */
  async storeCounts(m: EntityManager, rows: readonly (readonly unknown[])[]): Promise<void> {
    await this.db.insertRows(m, 'item_term_counts', TERM_COUNT_COLUMNS, rows);
  }

  /** The desk's current table; an empty one when nothing was imported. */
  async table(deskId: number): Promise<IdfTable> {
    const row = await this.db.queryOne<{ df: string }>(null, 'SELECT df FROM desk_features WHERE desk_id = $1', [
      deskId,
    ]);
    return row ? IdfTable.fromJSON(JSON.parse(row.df) as IdfTableJson) : IdfTable.create(DEFAULT_HASH_BITS);
  }
}

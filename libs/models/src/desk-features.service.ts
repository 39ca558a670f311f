import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database } from '#database';
import { createFeaturizer, DEFAULT_HASH_BITS, IdfTable, type Featurizer, type IdfTableJson } from '#learning';

/**
 * Each desk's document frequencies over its pool, for tf-idf: counted as
 * items are imported, in the import batch's own transaction, so the table
 * always matches the items that landed.
 */
@Injectable()
export class DeskFeaturesService {
  private readonly featurizers = new Map<number, Featurizer>();

  constructor(@Inject(Database) private readonly db: Database) {}

  featurizer(hashBits: number = DEFAULT_HASH_BITS): Featurizer {
    let f = this.featurizers.get(hashBits);
    if (!f) {
      f = createFeaturizer({ hashBits });
      this.featurizers.set(hashBits, f);
    }
    return f;
  }

  /** Adds documents to a desk's table within a write transaction (the row is locked on PostgreSQL). */
  async addDocuments(m: EntityManager, deskId: number, texts: readonly string[]): Promise<void> {
    if (texts.length === 0) return;
    const lock = this.db.pg ? ' FOR UPDATE' : '';
    const [row] = await this.db.query<{ hash_bits: number; df: string }>(m, `SELECT hash_bits, df FROM desk_features WHERE desk_id = $1${lock}`, [deskId]);
    const table = row ? IdfTable.fromJSON(JSON.parse(row.df) as IdfTableJson) : IdfTable.create(DEFAULT_HASH_BITS);
    const f = this.featurizer(table.hashBits);
    for (const t of texts) table.addDocument(f.counts(t));
    const json = JSON.stringify(table.toJSON());
    const now = this.db.time(new Date());
    if (row) await this.db.query(m, 'UPDATE desk_features SET document_count = $1, df = $2, updated_at = $3 WHERE desk_id = $4', [table.documentCount, json, now, deskId]);
    else await this.db.query(m, 'INSERT INTO desk_features (desk_id, hash_bits, document_count, df, updated_at) VALUES ($1, $2, $3, $4, $5)', [deskId, table.hashBits, table.documentCount, json, now]);
  }

  /** The desk's current table; an empty one when nothing was imported. */
  async table(deskId: number): Promise<IdfTable> {
    const [row] = await this.db.query<{ df: string }>(null, 'SELECT df FROM desk_features WHERE desk_id = $1', [deskId]);
    return row ? IdfTable.fromJSON(JSON.parse(row.df) as IdfTableJson) : IdfTable.create(DEFAULT_HASH_BITS);
  }
}

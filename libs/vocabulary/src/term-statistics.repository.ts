import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database, type DbInt } from '#database';

export interface StoredTermStatistics {
  deskId: number;
  computedAt: Date;
  itemWatermark: number;
  itemsCounted: number;
  seedTermsKey: string;
  modelVersion: number | null;
  vocabularySize: number;
  figures: Record<string, number>;
  data: Uint8Array;
}

interface StatisticsRow {
  computed_at: unknown;
  item_watermark: DbInt;
  items_counted: DbInt;
  seed_terms_key: string;
  model_version: DbInt | null;
  vocabulary_size: DbInt;
  figures: string;
  data: Uint8Array;
}

/** All SQL of the seed-term suggestions: the pool read in pages, the stored statistics, the dismissals. */
@Injectable()
export class TermStatisticsRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** Highest item id of the desk (0 when it has none). */
  async itemWatermark(deskId: number): Promise<number> {
    const row = await this.db.queryOne<{ top: DbInt | null }>(
      null,
      'SELECT MAX(id) AS top FROM items WHERE desk_id = $1',
      [deskId],
    );
    return Number(row?.top ?? 0);
  }

  /** One page of the desk's items up to the watermark, by id: the whole pool, whatever the items' state, erased ones left out. */
  async itemPage(
    deskId: number,
    after: number,
    upTo: number,
    size: number,
  ): Promise<Array<{ id: number; text: string }>> {
    const rows = await this.db.query<{ id: DbInt; text: string }>(
      null,
      `SELECT id, text FROM items WHERE desk_id = $1 AND id > $2 AND id <= $3 AND erased_at IS NULL ORDER BY id LIMIT ${size}`,
      [deskId, after, upTo],
    );
    return rows.map((r) => ({ id: Number(r.id), text: r.text }));
  }

  /** Texts of some items of the desk, by id (erased ones have none). */
  async texts(deskId: number, ids: readonly number[]): Promise<Map<number, string>> {
    if (ids.length === 0) return new Map();
    const rows = await this.db.query<{ id: DbInt; text: string }>(
      null,
      `SELECT id, text FROM items WHERE desk_id = $1 AND erased_at IS NULL AND id IN (${ids.map((_, i) => `$${i + 2}`).join(', ')})`,
      [deskId, ...ids],
    );
    return new Map(rows.map((r) => [Number(r.id), r.text]));
  }

  async store(s: StoredTermStatistics): Promise<void> {
    await this.db.write(async (m) => {
      await this.db.query(
        m,
        `INSERT INTO term_statistics (desk_id, computed_at, item_watermark, items_counted, seed_terms_key, model_version, vocabulary_size, figures, data)
         VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)
         ON CONFLICT (desk_id) DO UPDATE SET computed_at = excluded.computed_at, item_watermark = excluded.item_watermark,
           items_counted = excluded.items_counted, seed_terms_key = excluded.seed_terms_key, model_version = excluded.model_version,
           vocabulary_size = excluded.vocabulary_size, figures = excluded.figures, data = excluded.data`,
        [
          s.deskId,
          this.db.time(s.computedAt),
          s.itemWatermark,
          s.itemsCounted,
          s.seedTermsKey,
          s.modelVersion,
          s.vocabularySize,
          JSON.stringify(s.figures),
          Buffer.from(s.data.buffer, s.data.byteOffset, s.data.byteLength),
        ],
      );
    });
  }

  /** When the desk's statistics were computed (without reading them), or undefined. */
  async computedAt(deskId: number): Promise<Date | undefined> {
    const row = await this.db.queryOne<{ computed_at: unknown }>(
      null,
      'SELECT computed_at FROM term_statistics WHERE desk_id = $1',
      [deskId],
    );
    return row ? this.db.parseTime(row.computed_at)! : undefined;
  }

  async load(deskId: number): Promise<StoredTermStatistics | undefined> {
    const row = await this.db.queryOne<StatisticsRow>(
      null,
      'SELECT computed_at, item_watermark, items_counted, seed_terms_key, model_version, vocabulary_size, figures, data FROM term_statistics WHERE desk_id = $1',
      [deskId],
    );
    if (!row) return undefined;
    return {
      deskId,
      computedAt: this.db.parseTime(row.computed_at)!,
      itemWatermark: Number(row.item_watermark),
      itemsCounted: Number(row.items_counted),
      seedTermsKey: row.seed_terms_key,
      modelVersion: row.model_version === null ? null : Number(row.model_version),
      vocabularySize: Number(row.vocabulary_size),
      figures: JSON.parse(row.figures) as Record<string, number>,
      data: row.data,
    };
  }

  /** Dismissed terms of one category. */
  async dismissed(deskId: number, categoryId: number): Promise<Set<string>> {
    const rows = await this.db.query<{ term: string }>(
      null,
      'SELECT term FROM term_dismissals WHERE desk_id = $1 AND category_id = $2',
      [deskId, categoryId],
    );
    return new Set(rows.map((r) => r.term));
  }

  /** Records a dismissal; false when it was recorded already. */
  async dismiss(
    m: EntityManager,
    d: { deskId: number; categoryId: number; term: string; userId: number; at: Date },
  ): Promise<boolean> {
    const inserted = await this.db.query<{ id: DbInt }>(
      m,
      'INSERT INTO term_dismissals (desk_id, category_id, term, dismissed_by, dismissed_at) VALUES ($1, $2, $3, $4, $5) ON CONFLICT DO NOTHING RETURNING id',
      [d.deskId, d.categoryId, d.term, d.userId, this.db.time(d.at)],
    );
    return inserted.length > 0;
  }
}

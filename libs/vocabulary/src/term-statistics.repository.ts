import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { CategoryEntity, Database, DeskEntity, type DbInt } from '#database';
import type { KeywordDays, LabelledDraw } from './keyword-days.js';

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
  /** Keyword counts per day, counted with the same seed terms; null for statistics stored before they were kept. */
  keywordDays: KeywordDays | null;
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
  keyword_days: string | null;
}

/** All SQL of the seed-term suggestions: the pool read in pages, the stored statistics, the dismissals. */
@Injectable()
export class TermStatisticsRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** The desk and its categories in desk order, read afresh (a count must see the seed terms as they are now); null when there is no such desk. */
  async desk(deskId: number): Promise<{ desk: DeskEntity; categories: CategoryEntity[] } | null> {
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    if (!desk) return null;
    const categories = await this.db.manager.find(CategoryEntity, { where: { deskId }, order: { position: 'ASC' } });
    return { desk, categories };
  }

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
  ): Promise<Array<{ id: number; text: string; postedAt: Date | null; importedAt: Date }>> {
    const rows = await this.db.query<{ id: DbInt; text: string; posted_at: unknown; imported_at: unknown }>(
      null,
      `SELECT id, text, posted_at, imported_at FROM items WHERE desk_id = $1 AND id > $2 AND id <= $3 AND erased_at IS NULL ORDER BY id LIMIT ${size}`,
      [deskId, after, upTo],
    );
    return rows.map((r) => ({
      id: Number(r.id),
      text: r.text,
      postedAt: this.db.parseTime(r.posted_at),
      importedAt: this.db.parseTime(r.imported_at)!,
    }));
  }

  /**
   * The desk's random-draw items that still hold their text, each with the
   * category of its latest random-draw verdict (a settlement overrides it;
   * abstentions and undone verdicts left out) and its dates.
   */
  async randomDraws(deskId: number): Promise<LabelledDraw[]> {
    const rows = await this.db.query<{
      item_id: DbInt;
      category: string | null;
      text: string;
      posted_at: unknown;
      imported_at: unknown;
    }>(
      null,
      `SELECT v.item_id, COALESCE(
           (SELECT c2.name FROM settlements s JOIN categories c2 ON c2.id = s.category_id
             WHERE s.item_id = v.item_id ORDER BY s.id DESC LIMIT 1),
           c.name) AS category,
         i.text, i.posted_at, i.imported_at
       FROM verdicts v LEFT JOIN categories c ON c.id = v.category_id JOIN items i ON i.id = v.item_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.undone_at IS NULL AND i.erased_at IS NULL ORDER BY v.id`,
      [deskId],
    );
    const byItem = new Map<number, LabelledDraw>();
    for (const r of rows) {
      if (r.category === null) {
        byItem.delete(Number(r.item_id));
        continue;
      }
      byItem.set(Number(r.item_id), {
        text: r.text,
        label: r.category,
        postedAt: this.db.parseTime(r.posted_at),
        importedAt: this.db.parseTime(r.imported_at)!,
      });
    }
    return [...byItem.values()];
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
        `INSERT INTO term_statistics (desk_id, computed_at, item_watermark, items_counted, seed_terms_key, model_version, vocabulary_size, figures, data, keyword_days)
         VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)
         ON CONFLICT (desk_id) DO UPDATE SET computed_at = excluded.computed_at, item_watermark = excluded.item_watermark,
           items_counted = excluded.items_counted, seed_terms_key = excluded.seed_terms_key, model_version = excluded.model_version,
           vocabulary_size = excluded.vocabulary_size, figures = excluded.figures, data = excluded.data,
           keyword_days = excluded.keyword_days`,
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
          s.keywordDays === null ? null : JSON.stringify(s.keywordDays),
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
      'SELECT computed_at, item_watermark, items_counted, seed_terms_key, model_version, vocabulary_size, figures, data, keyword_days FROM term_statistics WHERE desk_id = $1',
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
      keywordDays: row.keyword_days === null ? null : (JSON.parse(row.keyword_days) as KeywordDays),
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

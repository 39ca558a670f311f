import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Keyword counts over time: the count job of the seed-term suggestions also
 * counts, per day and category, the items that match the category's seed
 * terms (by posting day and by import day), kept as JSON beside the word
 * statistics it is computed with. Null until the job has run once.
 */
export class KeywordCounts1766510000000 implements MigrationInterface {
  name = 'KeywordCounts1766510000000';

  async up(qr: QueryRunner): Promise<void> {
    await qr.query('ALTER TABLE term_statistics ADD COLUMN keyword_days text');
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.query('ALTER TABLE term_statistics DROP COLUMN keyword_days');
  }
}

import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Retention periods of a desk (`desks.retention`, a JSON object): `decidedAfterDays` (decided items, counted from
 * their last decision), `categories` (a period per category name for decided items with that label, instead of
 * `decidedAfterDays`) and `openAfterDays` (items never decided, counted from their import); a missing or null period
 * keeps items. Which names are categories, and the range of each period, is checked by the desks service.
 * `ix_items_desk_imported` lets the daily run find items old enough without reading the desk's whole pool.
 */
export class Retention1766700000001 implements MigrationInterface {
  name = 'Retention1766700000001';

  async up(qr: QueryRunner): Promise<void> {
    // A plain ALTER keeps SQLite from rebuilding the desks table, which others reference.
    await qr.query(`ALTER TABLE desks ADD COLUMN retention text NOT NULL DEFAULT '{}'`);
    await qr.query('CREATE INDEX ix_items_desk_imported ON items (desk_id, imported_at)');
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.query('DROP INDEX ix_items_desk_imported');
    await qr.query('ALTER TABLE desks DROP COLUMN retention');
  }
}

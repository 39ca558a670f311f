import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * `ix_items_marker` also holds `priority_model_version`: the screening cache's change marker counts the open items
 * the current version has scored, which grows when that version scores items imported after it (without a new
 * version), so the marker still counts from the index alone.
 */
export class MarkerScored1766830000000 implements MigrationInterface {
  name = 'MarkerScored1766830000000';

  async up(qr: QueryRunner): Promise<void> {
    await qr.query('DROP INDEX ix_items_marker');
    await qr.query(
      'CREATE INDEX ix_items_marker ON items (desk_id, id, state, seed_hits, erased_at, priority_model_version)',
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.query('DROP INDEX ix_items_marker');
    await qr.query('CREATE INDEX ix_items_marker ON items (desk_id, id, state, seed_hits, erased_at)');
  }
}

import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * `ix_items_marker` holds every column the screening cache's change marker reads of a desk's items (count, largest
 * id, open, seed-matched and erased items), so that the marker, read at every `GET /screening` and
 * `GET /prevalence`, counts them from the index instead of reading the whole pool's rows. On PostgreSQL the index
 * alone answers once vacuum has marked the pages all-visible (as autovacuum does after the bulk updates of a
 * publish); until then the planner reads the rows as before.
 */
export class ScreeningMarker1766820000000 implements MigrationInterface {
  name = 'ScreeningMarker1766820000000';

  async up(qr: QueryRunner): Promise<void> {
    await qr.query('CREATE INDEX ix_items_marker ON items (desk_id, id, state, seed_hits, erased_at)');
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.query('DROP INDEX ix_items_marker');
  }
}

import { TableCheck, type MigrationInterface, type QueryRunner } from 'typeorm';

const drawList = (kinds: readonly string[]) => `draw IN (${kinds.map((k) => `'${k}'`).join(', ')})`;
const BEFORE = ['seed', 'uncertainty', 'random', 'second-opinion'];
const AFTER = [...BEFORE, 'screen'];

/**
 * The review lane: a draw kind `screen` (a flagged item, highest probability
 * of a watched category first) on leases and verdicts, and the desk's
 * `screen_share` (the share of leases drawn from the lane once a version
 * exists and a category is watched). `random_share + screen_share <= 1` is
 * checked by the desks service: SQLite cannot add a check that names two
 * columns to an existing table without rebuilding `desks`, which every other
 * table references. Widening the draw lists rebuilds `leases` and `verdicts`
 * on SQLite (foreign keys are off while migrations run); on PostgreSQL it is
 * a plain constraint swap.
 */
export class ScreenLane1766410000000 implements MigrationInterface {
  name = 'ScreenLane1766410000000';

  async up(qr: QueryRunner): Promise<void> {
    await this.swap(qr, AFTER);
    await qr.query(
      `ALTER TABLE desks ADD COLUMN screen_share double precision NOT NULL DEFAULT 0.5 CONSTRAINT ck_desks_screen_share CHECK (screen_share >= 0 AND screen_share <= 1)`,
    );
    // A desk whose random share is above one half keeps the rest for the lane.
    await qr.query('UPDATE desks SET screen_share = 1 - random_share WHERE random_share > 0.5');
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.query(`UPDATE leases SET draw = 'uncertainty' WHERE draw = 'screen'`);
    await qr.query(`UPDATE verdicts SET draw = 'uncertainty' WHERE draw = 'screen'`);
    await qr.query('ALTER TABLE desks DROP COLUMN screen_share');
    await this.swap(qr, BEFORE);
  }

  private async swap(qr: QueryRunner, kinds: readonly string[]): Promise<void> {
    for (const table of ['leases', 'verdicts']) {
      const name = `ck_${table}_draw`;
      await qr.dropCheckConstraint(table, name);
      await qr.createCheckConstraint(table, new TableCheck({ name, expression: drawList(kinds) }));
    }
  }
}

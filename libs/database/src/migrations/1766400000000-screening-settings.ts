import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Screening settings of a desk: the watched categories (`watch`, a JSON list
 * of category names), a coverage target per category (`coverage_targets`, a
 * JSON object; a category without one uses `coverage_target`), and the
 * confidence of the promise (`confidence`: null for expected coverage, else
 * the probability over the calibration draws that the coverage reaches the
 * target). Which names are categories of the desk is checked by the desks
 * service, since categories live in their own table.
 */
export class ScreeningSettings1766400000000 implements MigrationInterface {
  name = 'ScreeningSettings1766400000000';

  async up(qr: QueryRunner): Promise<void> {
    // Plain ALTERs keep SQLite from rebuilding the desks table, which others reference.
    await qr.query(`ALTER TABLE desks ADD COLUMN watch text NOT NULL DEFAULT '[]'`);
    await qr.query(`ALTER TABLE desks ADD COLUMN coverage_targets text NOT NULL DEFAULT '{}'`);
    await qr.query(
      `ALTER TABLE desks ADD COLUMN confidence double precision NULL CONSTRAINT ck_desks_confidence CHECK (confidence IS NULL OR (confidence >= 0.5 AND confidence <= 0.999))`,
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    // SQLite (3.35 and later) drops a column whose only CHECK is its own.
    await qr.query('ALTER TABLE desks DROP COLUMN confidence');
    await qr.query('ALTER TABLE desks DROP COLUMN coverage_targets');
    await qr.query('ALTER TABLE desks DROP COLUMN watch');
  }
}

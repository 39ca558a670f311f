import { Table, TableForeignKey, type MigrationInterface, type QueryRunner } from 'typeorm';

/**
 * What a reviewer can ask of the queue for themselves:
 * - `lease_skips`: an item a reviewer skipped is not served to that reviewer again until `expires_at` (one sign-in
 *   session's length after the skip); other reviewers get it as usual. One row per reviewer and item: a second skip
 *   moves the expiry.
 * - `user_preferences`: each account's own screen preferences (JSON; the auth room checks its members).
 * - `desks.serve_simulated_second_opinions`: whether second opinions of the demo's simulated verdicts go to people
 *   (off unless a supervisor asks for it).
 */
export class QueueComfort1766810000000 implements MigrationInterface {
  name = 'QueueComfort1766810000000';

  async up(qr: QueryRunner): Promise<void> {
    const time = qr.dataSource.options.type === 'postgres' ? 'timestamptz' : 'datetime';
    await qr.createTable(
      new Table({
        name: 'lease_skips',
        columns: [
          { name: 'reviewer_id', type: 'integer', isPrimary: true },
          { name: 'item_id', type: 'integer', isPrimary: true },
          { name: 'desk_id', type: 'integer' },
          { name: 'skipped_at', type: time },
          { name: 'expires_at', type: time },
        ],
        checks: [{ name: 'ck_lease_skips_expiry', expression: 'expires_at > skipped_at' }],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['reviewer_id'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['item_id'],
            referencedTableName: 'items',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['desk_id'],
            referencedTableName: 'desks',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
        ],
        indices: [{ name: 'ix_lease_skips_reviewer_desk', columnNames: ['reviewer_id', 'desk_id', 'expires_at'] }],
      }),
    );
    await qr.createTable(
      new Table({
        name: 'user_preferences',
        columns: [
          { name: 'user_id', type: 'integer', isPrimary: true },
          { name: 'preferences', type: 'text' },
          { name: 'updated_at', type: time },
        ],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['user_id'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
        ],
      }),
    );
    // A plain ALTER keeps SQLite from rebuilding the desks table, which others reference.
    await qr.query('ALTER TABLE desks ADD COLUMN serve_simulated_second_opinions boolean NOT NULL DEFAULT false');
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.query('ALTER TABLE desks DROP COLUMN serve_simulated_second_opinions');
    await qr.dropTable('user_preferences');
    await qr.dropTable('lease_skips');
  }
}

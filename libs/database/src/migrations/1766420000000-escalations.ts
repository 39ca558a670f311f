import { Table, TableForeignKey, type MigrationInterface, type QueryRunner } from 'typeorm';

/** Longest reason a reviewer may give when marking an item urgent. */
export const URGENT_REASON_MAX = 280;

/**
 * Escalations: a reviewer marks an item urgent with a verdict and a short
 * reason; a supervisor acknowledges it. One row per urgent verdict;
 * acknowledging an item acknowledges every waiting row of it at once.
 */
export class Escalations1766420000000 implements MigrationInterface {
  name = 'Escalations1766420000000';

  async up(qr: QueryRunner): Promise<void> {
    const time = qr.dataSource.options.type === 'postgres' ? 'timestamptz' : 'datetime';
    await qr.createTable(
      new Table({
        name: 'escalations',
        columns: [
          { name: 'id', type: 'integer', isPrimary: true, isGenerated: true, generationStrategy: 'increment' },
          { name: 'desk_id', type: 'integer' },
          { name: 'item_id', type: 'integer' },
          { name: 'verdict_id', type: 'integer' },
          { name: 'reason', type: 'text' },
          { name: 'raised_by', type: 'integer' },
          { name: 'raised_at', type: time },
          { name: 'acknowledged_by', type: 'integer', isNullable: true },
          { name: 'acknowledged_at', type: time, isNullable: true },
        ],
        checks: [
          { name: 'ck_escalations_reason', expression: `length(reason) BETWEEN 1 AND ${URGENT_REASON_MAX}` },
          {
            name: 'ck_escalations_acknowledged',
            expression: '(acknowledged_at IS NULL) = (acknowledged_by IS NULL)',
          },
        ],
        uniques: [{ name: 'uq_escalations_verdict', columnNames: ['verdict_id'] }],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['desk_id'],
            referencedTableName: 'desks',
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
            columnNames: ['verdict_id'],
            referencedTableName: 'verdicts',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['raised_by'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
          }),
          new TableForeignKey({
            columnNames: ['acknowledged_by'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
          }),
        ],
        indices: [
          { name: 'ix_escalations_desk', columnNames: ['desk_id', 'id'] },
          { name: 'ix_escalations_item', columnNames: ['item_id'] },
        ],
      }),
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.dropTable('escalations');
  }
}

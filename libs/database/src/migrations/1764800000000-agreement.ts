import { Table, TableForeignKey, type MigrationInterface, type QueryRunner, type TableColumnOptions } from 'typeorm';

/** Longest reason a supervisor may give when settling an item. */
export const SETTLEMENT_REASON_MAX = 2000;

/**
 * Second opinions and settlements: the desk's share of decided items served
 * again to a different reviewer, the queue of items due for one, and the
 * supervisor's settled labels (an item may be settled again; every
 * settlement is kept, the latest counts).
 */
export class Agreement1764800000000 implements MigrationInterface {
  name = 'Agreement1764800000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    const time = (name: string, isNullable = false): TableColumnOptions => ({
      name,
      type: pg ? 'timestamptz' : 'datetime',
      isNullable,
    });
    const int = (name: string, isNullable = false): TableColumnOptions => ({ name, type: 'integer', isNullable });

    // A plain ALTER keeps SQLite from rebuilding the desks table (which others reference) to add one checked column.
    await qr.query(
      `ALTER TABLE desks ADD COLUMN second_opinion_share double precision NOT NULL DEFAULT 0.1 CONSTRAINT ck_desks_second_opinion CHECK (second_opinion_share >= 0 AND second_opinion_share <= 1)`,
    );

    await qr.createTable(
      new Table({
        name: 'second_opinions',
        columns: [
          { ...int('item_id'), isPrimary: true },
          int('desk_id'),
          { name: 'state', type: 'varchar', length: '8' },
          { name: 'lease_id', type: 'varchar', length: '36', isNullable: true },
          time('leased_until', true),
          int('verdict_id', true),
          time('created_at'),
          time('done_at', true),
        ],
        checks: [
          { name: 'ck_second_opinions_state', expression: "state IN ('due', 'leased', 'done')" },
          {
            name: 'ck_second_opinions_lease',
            expression: "(state = 'leased') = (lease_id IS NOT NULL) AND (lease_id IS NULL) = (leased_until IS NULL)",
          },
          { name: 'ck_second_opinions_done', expression: "(state = 'done') = (done_at IS NOT NULL)" },
        ],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['item_id', 'desk_id'],
            referencedTableName: 'items',
            referencedColumnNames: ['id', 'desk_id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['verdict_id'],
            referencedTableName: 'verdicts',
            referencedColumnNames: ['id'],
            onDelete: 'SET NULL',
          }),
        ],
        // The queue of due items: oldest first.
        indices: [{ name: 'ix_second_opinions_queue', columnNames: ['desk_id', 'state', 'created_at', 'item_id'] }],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'settlements',
        columns: [
          { name: 'id', type: 'integer', isPrimary: true, isGenerated: true, generationStrategy: 'increment' },
          int('desk_id'),
          int('item_id'),
          int('category_id'),
          { name: 'reason', type: 'text' },
          int('settled_by'),
          time('created_at'),
        ],
        checks: [
          { name: 'ck_settlements_reason', expression: `length(reason) BETWEEN 1 AND ${SETTLEMENT_REASON_MAX}` },
        ],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['item_id', 'desk_id'],
            referencedTableName: 'items',
            referencedColumnNames: ['id', 'desk_id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['category_id', 'desk_id'],
            referencedTableName: 'categories',
            referencedColumnNames: ['id', 'desk_id'],
          }),
          new TableForeignKey({
            columnNames: ['settled_by'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
          }),
        ],
        indices: [
          { name: 'ix_settlements_item', columnNames: ['item_id', 'id'] },
          { name: 'ix_settlements_desk', columnNames: ['desk_id', 'item_id'] },
        ],
      }),
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.dropTable('settlements');
    await qr.dropTable('second_opinions');
    // SQLite (3.35 and later) drops a column whose only CHECK is its own.
    await qr.query('ALTER TABLE desks DROP COLUMN second_opinion_share');
  }
}

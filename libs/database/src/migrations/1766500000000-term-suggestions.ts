import { Table, TableForeignKey, type MigrationInterface, type QueryRunner, type TableColumnOptions } from 'typeorm';

/**
 * Seed-term suggestions: per desk, the word statistics the worker computed
 * from its pool (PPMI rows, counts, example items and, when a model was
 * current, how it leans each word; one binary row, replaced at each run), and
 * the suggestions a supervisor dismissed, so they are not offered again.
 */
export class TermSuggestions1766500000000 implements MigrationInterface {
  name = 'TermSuggestions1766500000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    const time = (name: string): TableColumnOptions => ({ name, type: pg ? 'timestamptz' : 'datetime' });
    await qr.createTable(
      new Table({
        name: 'term_statistics',
        columns: [
          { name: 'desk_id', type: 'integer', isPrimary: true },
          time('computed_at'),
          { name: 'item_watermark', type: 'integer' },
          { name: 'items_counted', type: 'integer' },
          { name: 'seed_terms_key', type: 'varchar', length: '64' },
          { name: 'model_version', type: 'integer', isNullable: true },
          { name: 'vocabulary_size', type: 'integer' },
          { name: 'figures', type: 'text' },
          { name: 'data', type: pg ? 'bytea' : 'blob' },
        ],
        checks: [
          { name: 'ck_term_statistics_counts', expression: 'items_counted >= 0 AND vocabulary_size >= 0' },
          { name: 'ck_term_statistics_data', expression: 'length(data) >= 16' },
        ],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['desk_id'],
            referencedTableName: 'desks',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
        ],
      }),
    );
    await qr.createTable(
      new Table({
        name: 'term_dismissals',
        columns: [
          { name: 'id', type: 'integer', isPrimary: true, isGenerated: true, generationStrategy: 'increment' },
          { name: 'desk_id', type: 'integer' },
          { name: 'category_id', type: 'integer' },
          { name: 'term', type: 'varchar', length: '100' },
          { name: 'dismissed_by', type: 'integer' },
          time('dismissed_at'),
        ],
        uniques: [{ name: 'uq_term_dismissals_term', columnNames: ['desk_id', 'category_id', 'term'] }],
        checks: [{ name: 'ck_term_dismissals_term', expression: 'length(term) > 0' }],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['desk_id'],
            referencedTableName: 'desks',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['category_id'],
            referencedTableName: 'categories',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['dismissed_by'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
          }),
        ],
      }),
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.dropTable('term_dismissals');
    await qr.dropTable('term_statistics');
  }
}

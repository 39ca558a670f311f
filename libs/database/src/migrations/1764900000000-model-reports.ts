import { Table, TableForeignKey, type MigrationInterface, type QueryRunner, type TableColumnOptions } from 'typeorm';

/**
 * Oversight reports, one per published model version: the figures as
 * canonical JSON and the self-contained HTML page made from them. In the
 * database rather than in files, so any API process on any machine serves
 * what a worker wrote.
 */
export class ModelReports1764900000000 implements MigrationInterface {
  name = 'ModelReports1764900000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    const time = (name: string, isNullable = false): TableColumnOptions => ({
      name,
      type: pg ? 'timestamptz' : 'datetime',
      isNullable,
    });
    const text = (name: string, isNullable = false): TableColumnOptions => ({ name, type: 'text', isNullable });
    await qr.createTable(
      new Table({
        name: 'model_reports',
        columns: [
          { name: 'id', type: 'integer', isPrimary: true, isGenerated: true, generationStrategy: 'increment' },
          { name: 'desk_id', type: 'integer' },
          { name: 'version', type: 'integer' },
          { name: 'state', type: 'varchar', length: '10' },
          text('figures', true),
          text('html', true),
          { name: 'figures_sha256', type: 'varchar', length: '64', isNullable: true },
          text('failure', true),
          time('started_at'),
          time('generated_at', true),
        ],
        uniques: [{ name: 'uq_model_reports_version', columnNames: ['desk_id', 'version'] }],
        checks: [
          { name: 'ck_model_reports_state', expression: "state IN ('writing', 'ready', 'failed')" },
          // A ready report has both files and its time; one being written or failed has neither.
          {
            name: 'ck_model_reports_ready',
            expression:
              "(state = 'ready') = (figures IS NOT NULL AND html IS NOT NULL AND figures_sha256 IS NOT NULL AND generated_at IS NOT NULL)",
          },
          { name: 'ck_model_reports_failure', expression: "(state = 'failed') = (failure IS NOT NULL)" },
        ],
        // The report belongs to an existing version of the same desk.
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['desk_id', 'version'],
            referencedTableName: 'model_versions',
            referencedColumnNames: ['desk_id', 'version'],
            onDelete: 'CASCADE',
          }),
        ],
      }),
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.dropTable('model_reports');
  }
}

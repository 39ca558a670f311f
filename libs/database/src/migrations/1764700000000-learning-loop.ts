import { Table, TableForeignKey, type MigrationInterface, type QueryRunner, type TableColumnOptions } from 'typeorm';

/**
 * The learning loop: each desk's document frequencies (for tf-idf), its model
 * versions (immutable once published), and the predictions of every open
 * item under a version.
 */
export class LearningLoop1764700000000 implements MigrationInterface {
  name = 'LearningLoop1764700000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    const time = (name: string, isNullable = false): TableColumnOptions => ({
      name,
      type: pg ? 'timestamptz' : 'datetime',
      isNullable,
    });
    const int = (name: string, isNullable = false): TableColumnOptions => ({ name, type: 'integer', isNullable });
    const text = (name: string, isNullable = false): TableColumnOptions => ({ name, type: 'text', isNullable });
    const fkDesk = new TableForeignKey({
      columnNames: ['desk_id'],
      referencedTableName: 'desks',
      referencedColumnNames: ['id'],
      onDelete: 'CASCADE',
    });

    await qr.createTable(
      new Table({
        name: 'desk_features',
        columns: [
          { ...int('desk_id'), isPrimary: true },
          int('hash_bits'),
          int('document_count'),
          text('df'),
          time('updated_at'),
        ],
        checks: [{ name: 'ck_desk_features_bits', expression: 'hash_bits BETWEEN 4 AND 26 AND document_count >= 0' }],
        foreignKeys: [fkDesk],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'model_versions',
        columns: [
          { name: 'id', type: 'integer', isPrimary: true, isGenerated: true, generationStrategy: 'increment' },
          int('desk_id'),
          int('version'),
          int('parent_version', true),
          { name: 'state', type: 'varchar', length: '12' },
          { name: 'job_key', type: 'varchar', length: '100' },
          int('verdict_watermark'),
          text('training'),
          text('calibration'),
          text('model', true),
          text('metrics', true),
          text('timings'),
          text('failure', true),
          time('created_at'),
          time('published_at', true),
        ],
        uniques: [
          { name: 'uq_model_versions_version', columnNames: ['desk_id', 'version'] },
          { name: 'uq_model_versions_job', columnNames: ['job_key'] },
        ],
        checks: [
          {
            name: 'ck_model_versions_state',
            expression: "state IN ('training', 'scoring', 'published', 'superseded', 'failed')",
          },
          { name: 'ck_model_versions_version', expression: 'version >= 1' },
          {
            name: 'ck_model_versions_published',
            expression: "(state = 'published') = (published_at IS NOT NULL) OR state = 'superseded'",
          },
        ],
        foreignKeys: [fkDesk],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'predictions',
        columns: [
          { ...int('item_id'), isPrimary: true },
          { ...int('model_version'), isPrimary: true },
          int('desk_id'),
          text('probabilities'),
          { name: 'uncertainty', type: 'double precision' },
          { name: 'priority', type: 'double precision' },
        ],
        checks: [{ name: 'ck_predictions_uncertainty', expression: 'uncertainty >= 0' }],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['item_id', 'desk_id'],
            referencedTableName: 'items',
            referencedColumnNames: ['id', 'desk_id'],
            onDelete: 'CASCADE',
          }),
        ],
        indices: [{ name: 'ix_predictions_version', columnNames: ['desk_id', 'model_version', 'item_id'] }],
      }),
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    for (const table of ['predictions', 'model_versions', 'desk_features']) await qr.dropTable(table);
  }
}

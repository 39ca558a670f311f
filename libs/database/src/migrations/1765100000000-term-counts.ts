import { Table, TableForeignKey, type MigrationInterface, type QueryRunner } from 'typeorm';

/**
 * Each item's hashed term counts, counted once at import, so that scoring a
 * pool under a new model version applies tf-idf and the classifier without
 * tokenising every text again. `featurizer` names the featuriser settings
 * the counts were made with; a model with other settings tokenises instead.
 * Items imported before this migration have no row: scoring counts them and
 * fills their row in.
 *
 * Also narrows the expired-lease index to leased items: publishing a version
 * rewrites every open item's priority, and each rewritten row (PostgreSQL
 * cannot update an indexed column in place) adds an entry to every index that
 * covers it; open items have no business in this one.
 */
export class TermCounts1765100000000 implements MigrationInterface {
  name = 'TermCounts1765100000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    await qr.createTable(
      new Table({
        name: 'item_term_counts',
        columns: [
          { name: 'item_id', type: 'integer', isPrimary: true },
          { name: 'featurizer', type: 'varchar', length: '40' },
          { name: 'counts', type: pg ? 'bytea' : 'blob' },
        ],
        // Format byte and term count at least (see libs/models term-counts.ts).
        checks: [{ name: 'ck_item_term_counts_bytes', expression: 'length(counts) >= 2' }],
        // To the primary key: PostgreSQL checks it with an index probe whatever the statistics say. Checked
        // against (id, desk_id), the check's plan, made while a first import had few rows, stayed a sequential scan.
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['item_id'],
            referencedTableName: 'items',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
        ],
      }),
    );
    // The lease query asks for state = 'leased' AND leased_until < now, oldest first: the predicate matches.
    await qr.query('DROP INDEX ix_items_expiry');
    await qr.query("CREATE INDEX ix_items_expiry ON items (desk_id, leased_until) WHERE state = 'leased'");
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.query('DROP INDEX ix_items_expiry');
    await qr.query('CREATE INDEX ix_items_expiry ON items (desk_id, state, leased_until)');
    await qr.dropTable('item_term_counts');
  }
}

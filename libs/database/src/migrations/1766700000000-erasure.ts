import { Table, TableForeignKey, type MigrationInterface, type QueryRunner } from 'typeorm';

/** What a tombstone's `text` column holds (see {@link Erasure1766700000000}). */
export const TOMBSTONE_TEXT = '-';
/** Longest reason a supervisor may give for an erasure. */
export const ERASURE_REASON_MAX = 2000;

/**
 * Erasure: an item's text, metadata, external id and source can be erased, leaving a tombstone (id, the external id and
 * source hashed with a per-desk salt, dates, `erased_at`, `erased_by`). The foundation's `length(text) > 0` stays: SQLite
 * cannot change a CHECK without rebuilding `items`, which every verdict, lease and prediction references, so a
 * tombstone's text is the one-character {@link TOMBSTONE_TEXT}, and `ck_items_erased` pins every erased field to its
 * tombstone value. `normalized_hash` (a hash of the text, unique per desk) becomes `erased:<id>`.
 *
 * `erasures` records each erasure (on request, with its reason, or by the retention period) with what was asked and
 * what was erased, as counts: never a text, an external id or a source.
 */
export class Erasure1766700000000 implements MigrationInterface {
  name = 'Erasure1766700000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    const time = pg ? 'timestamptz' : 'datetime';
    const erased =
      `erased_at IS NULL OR (text = '${TOMBSTONE_TEXT}' AND normalized_text = '' AND meta = '{}' ` +
      `AND external_id IS NULL AND source IS NULL AND normalized_hash = 'erased:' || CAST(id AS varchar(20)))`;
    const by = `(erased_at IS NULL) = (erased_by IS NULL) AND (erased_by IS NULL OR erased_by IN ('request', 'retention'))`;
    await qr.query(`ALTER TABLE items ADD COLUMN erased_at ${time} NULL`);
    await qr.query('ALTER TABLE items ADD COLUMN external_id_hash varchar(64) NULL');
    await qr.query('ALTER TABLE items ADD COLUMN source_hash varchar(64) NULL');
    if (pg) {
      await qr.query('ALTER TABLE items ADD COLUMN erased_by varchar(10) NULL');
      await qr.query(`ALTER TABLE items ADD CONSTRAINT ck_items_erased CHECK (${erased})`);
      await qr.query(`ALTER TABLE items ADD CONSTRAINT ck_items_erased_by CHECK (${by})`);
    } else {
      // A plain ALTER keeps SQLite from rebuilding the table; its column constraints may name other columns.
      await qr.query(
        `ALTER TABLE items ADD COLUMN erased_by varchar(10) NULL CONSTRAINT ck_items_erased CHECK (${erased}) CONSTRAINT ck_items_erased_by CHECK (${by})`,
      );
    }
    // Each desk's salt for the hashed external ids and sources of its tombstones; made at its first erasure.
    await qr.query('ALTER TABLE desks ADD COLUMN erasure_salt varchar(64) NULL');

    await qr.createTable(
      new Table({
        name: 'erasures',
        columns: [
          { name: 'id', type: 'integer', isPrimary: true, isGenerated: true, generationStrategy: 'increment' },
          { name: 'desk_id', type: 'integer' },
          { name: 'erased_by', type: 'varchar', length: '10' },
          { name: 'reason', type: 'text', isNullable: true },
          { name: 'requested_by', type: 'integer', isNullable: true },
          { name: 'created_at', type: time },
          // What was asked (how many external ids, sources, item ids) and what happened, as JSON counts.
          { name: 'asked', type: 'text' },
          { name: 'counts', type: 'text' },
        ],
        checks: [
          { name: 'ck_erasures_by', expression: "erased_by IN ('request', 'retention')" },
          {
            name: 'ck_erasures_reason',
            expression: `erased_by <> 'request' OR length(reason) BETWEEN 1 AND ${ERASURE_REASON_MAX}`,
          },
        ],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['desk_id'],
            referencedTableName: 'desks',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['requested_by'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
          }),
        ],
        indices: [{ name: 'ix_erasures_desk', columnNames: ['desk_id', 'id'] }],
      }),
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.dropTable('erasures');
    await qr.query('ALTER TABLE desks DROP COLUMN erasure_salt');
    if (qr.dataSource.options.type === 'postgres') {
      await qr.query('ALTER TABLE items DROP CONSTRAINT ck_items_erased_by');
      await qr.query('ALTER TABLE items DROP CONSTRAINT ck_items_erased');
    }
    await qr.query('ALTER TABLE items DROP COLUMN erased_by');
    await qr.query('ALTER TABLE items DROP COLUMN source_hash');
    await qr.query('ALTER TABLE items DROP COLUMN external_id_hash');
    await qr.query('ALTER TABLE items DROP COLUMN erased_at');
  }
}

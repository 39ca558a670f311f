import { TableIndex, type MigrationInterface, type QueryRunner } from 'typeorm';

/**
 * The decision trail reads a desk's verdicts in id order, page after page
 * (keyset on the id): without this index each page would scan and sort the
 * rest of the desk's verdicts.
 */
export class TrailIndex1765000000000 implements MigrationInterface {
  name = 'TrailIndex1765000000000';

  async up(qr: QueryRunner): Promise<void> {
    await qr.createIndex('verdicts', new TableIndex({ name: 'ix_verdicts_desk_id', columnNames: ['desk_id', 'id'] }));
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.dropIndex('verdicts', 'ix_verdicts_desk_id');
  }
}

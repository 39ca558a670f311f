import { TableCheck, type MigrationInterface, type QueryRunner } from 'typeorm';

const drawList = (kinds: readonly string[]) => `draw IN (${kinds.map((k) => `'${k}'`).join(', ')})`;
const BEFORE = ['seed', 'uncertainty', 'random', 'second-opinion', 'screen'];
const AFTER = [...BEFORE, 'archive'];

/**
 * Labelled archives: an import may name a label column, and each labelled row becomes a decided item with a verdict
 * by the system account `archive` (`users.is_system`: it cannot sign in, is not listed, and no one can change it;
 * the first labelled import makes it, so that a database without labelled imports keeps its account ids).
 * Such a verdict's draw is `archive` (it trains, never calibrates) or `random` when the uploader stated that the
 * archive was a uniform sample of the same stream; the import records its label column, its draw, how many rows it
 * labelled and who made that statement when. Widening the verdicts' draw list rebuilds `verdicts` on SQLite.
 */
export class LabelledArchives1766800000000 implements MigrationInterface {
  name = 'LabelledArchives1766800000000';

  async up(qr: QueryRunner): Promise<void> {
    await qr.query('ALTER TABLE users ADD COLUMN is_system boolean NOT NULL DEFAULT false');
    await this.swap(qr, AFTER);
    await qr.query('ALTER TABLE imports ADD COLUMN label_field varchar(100)');
    await qr.query(
      `ALTER TABLE imports ADD COLUMN label_draw varchar(10) CONSTRAINT ck_imports_label_draw CHECK (label_draw IN ('archive', 'random'))`,
    );
    await qr.query('ALTER TABLE imports ADD COLUMN labelled integer NOT NULL DEFAULT 0');
    await qr.query('ALTER TABLE imports ADD COLUMN uniform_sample_by integer REFERENCES users (id)');
    const time = qr.dataSource.options.type === 'postgres' ? 'timestamptz' : 'datetime';
    await qr.query(`ALTER TABLE imports ADD COLUMN uniform_sample_at ${time}`);
  }

  async down(qr: QueryRunner): Promise<void> {
    // TypeORM's dropColumn rebuilds the table on SQLite, which cannot drop a column that holds a foreign key.
    for (const col of ['uniform_sample_at', 'uniform_sample_by', 'labelled', 'label_draw', 'label_field'])
      await qr.dropColumn('imports', col);
    // The archive's labels go with their account: the older schema has neither the draw nor the account. Their audit
    // events stay (the trail is append-only and names its actors without a reference).
    await qr.query('DELETE FROM verdicts WHERE reviewer_id IN (SELECT id FROM users WHERE is_system = true)');
    await this.swap(qr, BEFORE);
    await qr.query('DELETE FROM users WHERE is_system = true');
    await qr.query('ALTER TABLE users DROP COLUMN is_system');
  }

  private async swap(qr: QueryRunner, kinds: readonly string[]): Promise<void> {
    const name = 'ck_verdicts_draw';
    await qr.dropCheckConstraint('verdicts', name);
    await qr.createCheckConstraint('verdicts', new TableCheck({ name, expression: drawList(kinds) }));
  }
}

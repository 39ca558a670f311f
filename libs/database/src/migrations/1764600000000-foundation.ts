import {
  Table,
  TableForeignKey,
  TableIndex,
  type MigrationInterface,
  type QueryRunner,
  type TableColumnOptions,
} from 'typeorm';

type Col = TableColumnOptions;

/** Column helpers that give the same logical schema on SQLite and PostgreSQL. */
function cols(qr: QueryRunner) {
  const pg = qr.dataSource.options.type === 'postgres';
  return {
    pg,
    id: (): Col => ({
      name: 'id',
      type: 'integer',
      isPrimary: true,
      isGenerated: true,
      generationStrategy: 'increment',
    }),
    uuid: (): Col => ({ name: 'id', type: 'varchar', length: '36', isPrimary: true }),
    int: (name: string, nullable = false, def?: number): Col => ({
      name,
      type: 'integer',
      isNullable: nullable,
      ...(def !== undefined ? { default: def } : {}),
    }),
    bigint: (name: string, def = 0): Col => ({ name, type: 'bigint', default: def }),
    double: (name: string, nullable = false): Col => ({ name, type: 'double precision', isNullable: nullable }),
    bool: (name: string, def: boolean): Col => ({ name, type: 'boolean', default: def ? 'true' : 'false' }),
    varchar: (name: string, length: number, nullable = false): Col => ({
      name,
      type: 'varchar',
      length: String(length),
      isNullable: nullable,
    }),
    text: (name: string, nullable = false): Col => ({ name, type: 'text', isNullable: nullable }),
    time: (name: string, nullable = false): Col => ({
      name,
      type: pg ? 'timestamptz' : 'datetime',
      isNullable: nullable,
    }),
  };
}

const fk = (
  columnNames: string[],
  referencedTableName: string,
  referencedColumnNames: string[],
  onDelete: 'CASCADE' | 'RESTRICT' | 'SET NULL' = 'RESTRICT',
) => new TableForeignKey({ columnNames, referencedTableName, referencedColumnNames, onDelete });

const inList = (column: string, values: readonly string[]) =>
  `${column} IN (${values.map((v) => `'${v}'`).join(', ')})`;

/**
 * The service foundation: accounts, desks and categories, imports, items,
 * leases, verdicts and the audit trail. Constraints live here so bad data
 * cannot get in even past the API.
 */
export class Foundation1764600000000 implements MigrationInterface {
  name = 'Foundation1764600000000';

  async up(qr: QueryRunner): Promise<void> {
    const c = cols(qr);

    await qr.createTable(
      new Table({
        name: 'users',
        columns: [
          c.id(),
          c.varchar('name', 100),
          c.varchar('role', 20),
          c.varchar('password_hash', 200, true),
          c.bool('disabled', false),
          c.time('created_at'),
        ],
        uniques: [{ name: 'uq_users_name', columnNames: ['name'] }],
        checks: [
          { name: 'ck_users_role', expression: inList('role', ['reviewer', 'supervisor', 'auditor', 'admin']) },
          { name: 'ck_users_name', expression: 'length(name) BETWEEN 1 AND 100' },
        ],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'credentials',
        columns: [
          c.id(),
          c.int('user_id'),
          c.varchar('kind', 10),
          c.varchar('secret_hash', 64),
          c.varchar('label', 100, true),
          c.time('created_at'),
          c.time('expires_at', true),
          c.time('revoked_at', true),
          c.time('last_used_at', true),
        ],
        uniques: [{ name: 'uq_credentials_secret', columnNames: ['secret_hash'] }],
        checks: [{ name: 'ck_credentials_kind', expression: inList('kind', ['token', 'session']) }],
        foreignKeys: [fk(['user_id'], 'users', ['id'], 'CASCADE')],
        indices: [{ name: 'ix_credentials_user', columnNames: ['user_id'] }],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'desks',
        columns: [
          c.id(),
          c.varchar('name', 200),
          c.text('seed_terms'),
          c.double('coverage_target'),
          c.varchar('calibration', 20),
          c.double('random_share'),
          c.int('lease_seconds'),
          c.int('current_model_version', true),
          c.int('created_by'),
          c.time('created_at'),
          c.time('updated_at'),
          c.int('retrain_every', false, 10),
          c.int('retrain_after_seconds', false, 30),
          { ...c.varchar('strategy', 20), default: "'entropy'" },
          { ...c.varchar('score', 3), default: "'lac'" },
        ],
        uniques: [{ name: 'uq_desks_name', columnNames: ['name'] }],
        checks: [
          { name: 'ck_desks_target', expression: 'coverage_target >= 0.5 AND coverage_target <= 0.999' },
          { name: 'ck_desks_calibration', expression: inList('calibration', ['marginal', 'per-category']) },
          { name: 'ck_desks_random_share', expression: 'random_share >= 0 AND random_share <= 1' },
          { name: 'ck_desks_lease', expression: 'lease_seconds BETWEEN 30 AND 86400' },
          {
            name: 'ck_desks_retrain',
            expression: 'retrain_every BETWEEN 1 AND 100000 AND retrain_after_seconds BETWEEN 1 AND 86400',
          },
          {
            name: 'ck_desks_strategy',
            expression: inList('strategy', ['entropy', 'margin', 'least-confidence', 'set-size']),
          },
          { name: 'ck_desks_score', expression: inList('score', ['lac', 'aps']) },
        ],
        foreignKeys: [fk(['created_by'], 'users', ['id'])],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'categories',
        columns: [c.id(), c.int('desk_id'), c.varchar('name', 100), c.int('position'), c.time('created_at')],
        uniques: [
          { name: 'uq_categories_name', columnNames: ['desk_id', 'name'] },
          // Target of the composite foreign keys that pin a verdict's category to its desk.
          { name: 'uq_categories_desk', columnNames: ['id', 'desk_id'] },
        ],
        checks: [
          { name: 'ck_categories_name', expression: 'length(name) BETWEEN 1 AND 100' },
          { name: 'ck_categories_position', expression: 'position BETWEEN 1 AND 20' },
        ],
        foreignKeys: [fk(['desk_id'], 'desks', ['id'], 'CASCADE')],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'imports',
        columns: [
          c.uuid(),
          c.int('desk_id'),
          c.varchar('format', 10),
          c.varchar('file_name', 255, true),
          c.varchar('state', 12),
          c.bigint('bytes_received'),
          c.int('rows_read', false, 0),
          c.int('imported', false, 0),
          c.int('duplicates', false, 0),
          c.int('rejected', false, 0),
          c.text('errors'),
          c.text('failure', true),
          c.int('rows_committed', false, 0),
          c.int('created_by'),
          c.time('created_at'),
          c.time('started_at', true),
          c.time('finished_at', true),
        ],
        checks: [
          {
            name: 'ck_imports_state',
            expression: inList('state', ['receiving', 'queued', 'running', 'done', 'failed']),
          },
          { name: 'ck_imports_format', expression: inList('format', ['ndjson', 'csv', 'json']) },
          {
            name: 'ck_imports_counts',
            expression:
              'imported >= 0 AND duplicates >= 0 AND rejected >= 0 AND imported + duplicates + rejected <= rows_read',
          },
        ],
        foreignKeys: [fk(['desk_id'], 'desks', ['id'], 'CASCADE'), fk(['created_by'], 'users', ['id'])],
        indices: [{ name: 'ix_imports_desk', columnNames: ['desk_id'] }],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'items',
        columns: [
          c.id(),
          c.int('desk_id'),
          c.varchar('import_id', 36, true),
          c.varchar('external_id', 200, true),
          c.varchar('source', 200, true),
          c.text('text'),
          c.text('normalized_text'),
          c.varchar('normalized_hash', 64),
          c.text('meta'),
          c.time('posted_at', true),
          c.time('imported_at'),
          c.varchar('state', 10),
          c.int('seed_hits', false, 0),
          { ...c.double('priority'), default: 0 },
          c.int('priority_model_version', true),
          c.double('rand_key'),
          c.varchar('lease_id', 36, true),
          c.time('leased_until', true),
        ],
        uniques: [
          { name: 'uq_items_external', columnNames: ['desk_id', 'external_id'] },
          { name: 'uq_items_text', columnNames: ['desk_id', 'normalized_hash'] },
          { name: 'uq_items_desk', columnNames: ['id', 'desk_id'] },
        ],
        checks: [
          { name: 'ck_items_state', expression: inList('state', ['open', 'leased', 'decided']) },
          { name: 'ck_items_text', expression: 'length(text) > 0' },
          { name: 'ck_items_rand', expression: 'rand_key >= 0 AND rand_key < 1' },
          { name: 'ck_items_lease', expression: '(lease_id IS NULL) = (leased_until IS NULL)' },
          { name: 'ck_items_leased', expression: "(state = 'leased') = (lease_id IS NOT NULL)" },
        ],
        foreignKeys: [fk(['desk_id'], 'desks', ['id'], 'CASCADE'), fk(['import_id'], 'imports', ['id'], 'SET NULL')],
        indices: [
          // The queue: open items of a desk by priority.
          { name: 'ix_items_queue', columnNames: ['desk_id', 'state', 'priority', 'id'] },
          // Uniform random draws: the first open item at or after a random key.
          { name: 'ix_items_random', columnNames: ['desk_id', 'state', 'rand_key'] },
          // Expired leases, oldest first, to hand their items out again.
          { name: 'ix_items_expiry', columnNames: ['desk_id', 'state', 'leased_until'] },
        ],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'leases',
        columns: [
          c.uuid(),
          c.int('desk_id'),
          c.int('item_id'),
          c.int('reviewer_id'),
          c.varchar('draw', 20),
          c.text('prediction', true),
          c.time('created_at'),
          c.time('expires_at'),
          c.time('closed_at', true),
          c.varchar('closed_reason', 10, true),
        ],
        checks: [
          { name: 'ck_leases_draw', expression: inList('draw', ['seed', 'uncertainty', 'random', 'second-opinion']) },
          {
            name: 'ck_leases_closed',
            expression:
              "(closed_at IS NULL AND closed_reason IS NULL) OR (closed_at IS NOT NULL AND closed_reason IN ('verdict', 'returned'))",
          },
          { name: 'ck_leases_expiry', expression: 'expires_at > created_at' },
        ],
        foreignKeys: [
          fk(['item_id', 'desk_id'], 'items', ['id', 'desk_id'], 'CASCADE'),
          fk(['reviewer_id'], 'users', ['id']),
        ],
        indices: [
          { name: 'ix_leases_item', columnNames: ['item_id'] },
          { name: 'ix_leases_reviewer', columnNames: ['reviewer_id', 'created_at'] },
        ],
      }),
    );

    await qr.createTable(
      new Table({
        name: 'verdicts',
        columns: [
          c.id(),
          c.int('desk_id'),
          c.int('item_id'),
          c.int('reviewer_id'),
          c.varchar('lease_id', 36, true),
          c.varchar('client_id', 100),
          c.int('category_id', true),
          c.bool('abstain', false),
          c.varchar('draw', 20),
          c.int('model_version', true),
          c.text('shown_set', true),
          c.varchar('shown_call', 12, true),
          c.text('shown_probabilities', true),
          c.int('elapsed_ms', true),
          c.text('note', true),
          c.bool('simulated', false),
          c.time('created_at'),
          c.time('undone_at', true),
        ],
        uniques: [{ name: 'uq_verdicts_client', columnNames: ['reviewer_id', 'client_id'] }],
        checks: [
          // Exactly one of: a category, or abstain.
          {
            name: 'ck_verdicts_decision',
            expression: '(category_id IS NOT NULL AND abstain = false) OR (category_id IS NULL AND abstain = true)',
          },
          { name: 'ck_verdicts_draw', expression: inList('draw', ['seed', 'uncertainty', 'random', 'second-opinion']) },
          {
            name: 'ck_verdicts_call',
            expression: `shown_call IS NULL OR ${inList('shown_call', ['sure', 'ambiguous', 'unfamiliar'])}`,
          },
          { name: 'ck_verdicts_shown', expression: '(model_version IS NULL) = (shown_call IS NULL)' },
          { name: 'ck_verdicts_elapsed', expression: 'elapsed_ms IS NULL OR elapsed_ms >= 0' },
          { name: 'ck_verdicts_client', expression: 'length(client_id) BETWEEN 1 AND 100' },
        ],
        foreignKeys: [
          fk(['item_id', 'desk_id'], 'items', ['id', 'desk_id'], 'CASCADE'),
          // The category must belong to the verdict's desk.
          fk(['category_id', 'desk_id'], 'categories', ['id', 'desk_id']),
          fk(['reviewer_id'], 'users', ['id']),
          fk(['lease_id'], 'leases', ['id'], 'SET NULL'),
        ],
        indices: [
          { name: 'ix_verdicts_desk', columnNames: ['desk_id', 'created_at'] },
          { name: 'ix_verdicts_reviewer', columnNames: ['reviewer_id', 'created_at'] },
        ],
      }),
    );
    // One live verdict per item and reviewer; an undone verdict stays in the trail beside its replacement.
    await qr.createIndex(
      'verdicts',
      new TableIndex({
        name: 'uq_verdicts_item_reviewer',
        columnNames: ['item_id', 'reviewer_id'],
        isUnique: true,
        where: 'undone_at IS NULL',
      }),
    );

    await qr.createTable(
      new Table({
        name: 'audit_events',
        columns: [
          c.id(),
          c.time('at'),
          c.int('actor_id', true),
          c.varchar('actor_name', 100),
          c.varchar('action', 60),
          c.varchar('entity_type', 40),
          c.varchar('entity_id', 100),
          c.int('desk_id', true),
          c.text('before', true),
          c.text('after', true),
        ],
        indices: [
          { name: 'ix_audit_desk', columnNames: ['desk_id', 'at'] },
          { name: 'ix_audit_at', columnNames: ['at'] },
        ],
      }),
    );
    // Append-only, enforced by the database itself.
    if (c.pg) {
      await qr.query(
        `CREATE FUNCTION audit_events_append_only() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'the audit trail is append-only'; END $$`,
      );
      await qr.query(
        `CREATE TRIGGER audit_events_no_update BEFORE UPDATE OR DELETE ON audit_events FOR EACH ROW EXECUTE FUNCTION audit_events_append_only()`,
      );
    } else {
      await qr.query(
        `CREATE TRIGGER audit_events_no_update BEFORE UPDATE ON audit_events BEGIN SELECT RAISE(ABORT, 'the audit trail is append-only'); END`,
      );
      await qr.query(
        `CREATE TRIGGER audit_events_no_delete BEFORE DELETE ON audit_events BEGIN SELECT RAISE(ABORT, 'the audit trail is append-only'); END`,
      );
    }
  }

  async down(qr: QueryRunner): Promise<void> {
    if (qr.dataSource.options.type === 'postgres') {
      await qr.query('DROP TRIGGER IF EXISTS audit_events_no_update ON audit_events');
      await qr.query('DROP FUNCTION IF EXISTS audit_events_append_only()');
    }
    for (const table of [
      'audit_events',
      'verdicts',
      'leases',
      'items',
      'imports',
      'categories',
      'desks',
      'credentials',
      'users',
    ]) {
      await qr.dropTable(table);
    }
  }
}

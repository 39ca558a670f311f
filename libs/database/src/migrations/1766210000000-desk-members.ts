import { Table, TableForeignKey, TableIndex, type MigrationInterface, type QueryRunner } from 'typeorm';

/**
 * Roles per desk: `desk_members` says who may see and do what on each desk. So that nobody loses access on upgrade,
 * every existing account that is not an admin becomes a member of every existing desk with its account role (README,
 * "Desks and members"); admins manage accounts and memberships and read a desk only once they are made members.
 */
export class DeskMembers1766210000000 implements MigrationInterface {
  name = 'DeskMembers1766210000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    const time = pg ? 'timestamptz' : 'datetime';
    await qr.createTable(
      new Table({
        name: 'desk_members',
        columns: [
          { name: 'desk_id', type: 'integer', isPrimary: true },
          { name: 'user_id', type: 'integer', isPrimary: true },
          { name: 'role', type: 'varchar', length: '20' },
          { name: 'created_at', type: time },
          { name: 'updated_at', type: time },
        ],
        checks: [{ name: 'ck_desk_members_role', expression: `role IN ('reviewer', 'supervisor', 'auditor')` }],
        foreignKeys: [
          new TableForeignKey({
            columnNames: ['desk_id'],
            referencedTableName: 'desks',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
          new TableForeignKey({
            columnNames: ['user_id'],
            referencedTableName: 'users',
            referencedColumnNames: ['id'],
            onDelete: 'CASCADE',
          }),
        ],
      }),
    );
    // "Which desks is this user on?" is asked on every desk list and audit read.
    await qr.createIndex('desk_members', new TableIndex({ name: 'ix_desk_members_user', columnNames: ['user_id'] }));
    const now = new Date();
    await qr.query(
      `INSERT INTO desk_members (desk_id, user_id, role, created_at, updated_at) SELECT d.id, u.id, u.role, ${pg ? '$1, $1' : '?, ?'} FROM desks d CROSS JOIN users u WHERE u.role IN ('reviewer', 'supervisor', 'auditor')`,
      pg
        ? [now]
        : [now.toISOString().replace('T', ' ').replace('Z', ''), now.toISOString().replace('T', ' ').replace('Z', '')],
    );
  }

  async down(qr: QueryRunner): Promise<void> {
    await qr.dropTable('desk_members');
  }
}

import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database, type DbBool, type DbInt, type MemberRole } from '#database';
import type { DeskAccess, DeskScopeKind } from './desk-scope.decorator.js';

/** The table holding the desk of each kind of scoped thing. */
const SCOPE_TABLE: Record<DeskScopeKind, { table: string; desk: string }> = {
  desk: { table: 'desks', desk: 'id' },
  item: { table: 'items', desk: 'desk_id' },
  lease: { table: 'leases', desk: 'desk_id' },
  import: { table: 'imports', desk: 'desk_id' },
  verdict: { table: 'verdicts', desk: 'desk_id' },
};

/** One member of a desk, as the members list shows it. */
export interface MemberView {
  userId: number;
  name: string;
  role: MemberRole;
  disabled: boolean;
  since: Date;
}

interface MemberRow {
  user_id: DbInt;
  name: string;
  role: MemberRole;
  disabled: DbBool;
  created_at: unknown;
}

/** All SQL of desk memberships (`desk_members`) and of finding the desk a scoped id belongs to. */
@Injectable()
export class MembershipRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** The desk that the `kind` row `id` (checked by the caller) belongs to, with the user's role there; null when there is no such row. */
  async access(kind: DeskScopeKind, id: string | number, userId: number): Promise<DeskAccess | null> {
    const t = SCOPE_TABLE[kind];
    const row = await this.db.queryOne<{ desk_id: DbInt; role: MemberRole | null }>(
      null,
      `SELECT t.${t.desk} AS desk_id, m.role FROM ${t.table} t
       LEFT JOIN desk_members m ON m.desk_id = t.${t.desk} AND m.user_id = $2 WHERE t.id = $1`,
      [id, userId],
    );
    return row ? { deskId: Number(row.desk_id), role: row.role ?? null } : null;
  }

  /** The ids of the desks on which the user holds one of `roles` (any role when omitted), in order. */
  async deskIdsOf(userId: number, roles?: readonly MemberRole[]): Promise<number[]> {
    if (roles?.length === 0) return [];
    const rows = await this.db.query<{ desk_id: DbInt }>(
      null,
      `SELECT desk_id FROM desk_members WHERE user_id = $1${roles ? ` AND role IN (${this.db.inList(roles.length, 2)})` : ''}
       ORDER BY desk_id`,
      [userId, ...(roles ?? [])],
    );
    return rows.map((r) => Number(r.desk_id));
  }

  /** The user's role on each desk they are a member of. */
  async rolesOf(userId: number): Promise<Map<number, MemberRole>> {
    const rows = await this.db.query<{ desk_id: DbInt; role: MemberRole }>(
      null,
      'SELECT desk_id, role FROM desk_members WHERE user_id = $1',
      [userId],
    );
    return new Map(rows.map((r) => [Number(r.desk_id), r.role]));
  }

  /** The desk's members by name. */
  async list(deskId: number): Promise<MemberView[]> {
    const rows = await this.db.query<MemberRow>(
      null,
      `SELECT m.user_id, u.name, m.role, u.disabled, m.created_at FROM desk_members m JOIN users u ON u.id = m.user_id
       WHERE m.desk_id = $1 ORDER BY u.name`,
      [deskId],
    );
    return rows.map((r) => ({
      userId: Number(r.user_id),
      name: r.name,
      role: r.role,
      disabled: this.db.bool(r.disabled),
      since: this.db.parseTime(r.created_at)!,
    }));
  }

  async roleIn(m: EntityManager, deskId: number, userId: number): Promise<MemberRole | null> {
    const row = await this.db.queryOne<{ role: MemberRole }>(
      m,
      'SELECT role FROM desk_members WHERE desk_id = $1 AND user_id = $2',
      [deskId, userId],
    );
    return row?.role ?? null;
  }

  async insert(m: EntityManager, deskId: number, userId: number, role: MemberRole, at: Date): Promise<void> {
    await this.db.query(
      m,
      'INSERT INTO desk_members (desk_id, user_id, role, created_at, updated_at) VALUES ($1, $2, $3, $4, $4)',
      [deskId, userId, role, this.db.time(at)],
    );
  }

  async changeRole(m: EntityManager, deskId: number, userId: number, role: MemberRole, at: Date): Promise<void> {
    await this.db.query(m, 'UPDATE desk_members SET role = $3, updated_at = $4 WHERE desk_id = $1 AND user_id = $2', [
      deskId,
      userId,
      role,
      this.db.time(at),
    ]);
  }

  async delete(m: EntityManager, deskId: number, userId: number): Promise<void> {
    await this.db.query(m, 'DELETE FROM desk_members WHERE desk_id = $1 AND user_id = $2', [deskId, userId]);
  }

  /** Whether the user exists and may be a member (system accounts, the archive's, never are). */
  async enrollable(m: EntityManager, userId: number): Promise<boolean> {
    const row = await this.db.queryOne<{ id: DbInt }>(m, 'SELECT id FROM users WHERE id = $1 AND NOT is_system', [
      userId,
    ]);
    return row !== undefined;
  }

  /** Locks the desk's row for the transaction; false when there is no such desk. */
  async lockDesk(m: EntityManager, deskId: number): Promise<boolean> {
    const desk = await this.db.queryOne(m, `SELECT id FROM desks WHERE id = $1${this.db.lockRows()}`, [deskId]);
    return desk !== undefined;
  }

  async supervisors(m: EntityManager, deskId: number): Promise<number> {
    const row = await this.db.queryOne<{ n: DbInt }>(
      m,
      `SELECT COUNT(*) AS n FROM desk_members WHERE desk_id = $1 AND role = 'supervisor'`,
      [deskId],
    );
    return Number(row?.n ?? 0);
  }
}

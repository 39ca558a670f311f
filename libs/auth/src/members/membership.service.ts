import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService, type AuditActor } from '#audit';
import { Database, type DbInt, type MemberRole } from '#database';
import { AuthConflict, AuthError, AuthNotFound } from '../auth.service.js';
import type { DeskAccess, DeskScopeKind } from './desk-scope.decorator.js';

/** The table holding the desk of each kind of scoped thing. */
const SCOPE_TABLE: Record<DeskScopeKind, { table: string; desk: string; uuid: boolean }> = {
  desk: { table: 'desks', desk: 'id', uuid: false },
  item: { table: 'items', desk: 'desk_id', uuid: false },
  lease: { table: 'leases', desk: 'desk_id', uuid: true },
  import: { table: 'imports', desk: 'desk_id', uuid: true },
  verdict: { table: 'verdicts', desk: 'desk_id', uuid: false },
};

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const MAX_ID = 2_147_483_647;

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
  disabled: boolean | number;
  created_at: unknown;
}

/**
 * Desk memberships (`desk_members`): who holds which role on which desk. The guard asks it for the desk and the
 * caller's role on every desk-scoped request; desk supervisors and admins change it through the members routes.
 */
@Injectable()
export class MembershipService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  /**
   * The desk that `id` (a desk, item, lease, import or verdict id as written in the path) belongs to, with the
   * user's role there; null when there is no such thing. Throws {@link AuthError} when `id` cannot be one.
   */
  async access(kind: DeskScopeKind, id: string, userId: number): Promise<DeskAccess | null> {
    const t = SCOPE_TABLE[kind];
    if (t.uuid ? !UUID.test(id) : !/^\d{1,10}$/.test(id) || Number(id) > MAX_ID)
      throw new AuthError(`${kind} id: expected ${t.uuid ? 'a UUID' : 'a whole number'}, got ${JSON.stringify(id)}`);
    const row = await this.db.queryOne<{ desk_id: DbInt; role: MemberRole | null }>(
      null,
      `SELECT t.${t.desk} AS desk_id, m.role FROM ${t.table} t LEFT JOIN desk_members m ON m.desk_id = t.${t.desk} AND m.user_id = $2 WHERE t.id = $1`,
      [t.uuid ? id.toLowerCase() : Number(id), userId],
    );
    return row ? { deskId: Number(row.desk_id), role: row.role ?? null } : null;
  }

  /** The ids of the desks on which the user holds one of `roles` (any role when omitted). */
  async deskIdsOf(userId: number, roles?: readonly MemberRole[]): Promise<number[]> {
    const rows = await this.db.query<{ desk_id: DbInt }>(
      null,
      `SELECT desk_id FROM desk_members WHERE user_id = $1${roles ? ` AND role IN (${roles.map((r) => `'${r}'`).join(', ')})` : ''} ORDER BY desk_id`,
      [userId],
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

  async list(deskId: number): Promise<MemberView[]> {
    const rows = await this.db.query<MemberRow>(
      null,
      'SELECT m.user_id, u.name, m.role, u.disabled, m.created_at FROM desk_members m JOIN users u ON u.id = m.user_id WHERE m.desk_id = $1 ORDER BY u.name',
      [deskId],
    );
    return rows.map((r) => ({
      userId: Number(r.user_id),
      name: r.name,
      role: r.role,
      disabled: Boolean(r.disabled),
      since: this.db.parseTime(r.created_at)!,
    }));
  }

  /** Makes a user a member of a desk inside the caller's transaction (a new desk's creator, the demo accounts). */
  async enrol(m: EntityManager, actor: AuditActor, deskId: number, userId: number, role: MemberRole): Promise<void> {
    const before = await this.roleIn(m, deskId, userId);
    const now = this.db.time(new Date());
    if (before === null)
      await this.db.query(
        m,
        'INSERT INTO desk_members (desk_id, user_id, role, created_at, updated_at) VALUES ($1, $2, $3, $4, $4)',
        [deskId, userId, role, now],
      );
    else if (before !== role)
      await this.db.query(m, 'UPDATE desk_members SET role = $3, updated_at = $4 WHERE desk_id = $1 AND user_id = $2', [
        deskId,
        userId,
        role,
        now,
      ]);
    else return;
    await this.audit.record(m, actor, {
      action: 'member.put',
      entityType: 'user',
      entityId: userId,
      deskId,
      before: before === null ? null : { role: before },
      after: { role },
    });
  }

  /**
   * Gives a user a role on a desk (adding them, or changing their role). A desk keeps at least one supervisor:
   * demoting the last one is a conflict.
   */
  async put(actor: AuditActor, deskId: number, userId: number, role: MemberRole): Promise<MemberView> {
    await this.db.write(async (m) => {
      await this.lockDesk(m, deskId);
      // A system account (the archive's) is never a member: it holds labels, it does not review.
      const user = await this.db.queryOne<{ id: DbInt }>(m, 'SELECT id FROM users WHERE id = $1 AND NOT is_system', [
        userId,
      ]);
      if (!user) throw new AuthNotFound(`no user ${userId}`);
      const before = await this.roleIn(m, deskId, userId);
      if (before === 'supervisor' && role !== 'supervisor') await this.keepASupervisor(m, deskId);
      await this.enrol(m, actor, deskId, userId, role);
    });
    const member = (await this.list(deskId)).find((v) => v.userId === userId);
    if (!member) throw new Error(`member ${userId} of desk ${deskId} vanished after it was written`);
    return member;
  }

  /** Takes a user off a desk; the last supervisor stays. */
  async remove(actor: AuditActor, deskId: number, userId: number): Promise<void> {
    await this.db.write(async (m) => {
      await this.lockDesk(m, deskId);
      const before = await this.roleIn(m, deskId, userId);
      if (before === null) throw new AuthNotFound(`user ${userId} is not a member of desk ${deskId}`);
      if (before === 'supervisor') await this.keepASupervisor(m, deskId);
      await this.db.query(m, 'DELETE FROM desk_members WHERE desk_id = $1 AND user_id = $2', [deskId, userId]);
      await this.audit.record(m, actor, {
        action: 'member.remove',
        entityType: 'user',
        entityId: userId,
        deskId,
        before: { role: before },
      });
    });
  }

  private async roleIn(m: EntityManager, deskId: number, userId: number): Promise<MemberRole | null> {
    const row = await this.db.queryOne<{ role: MemberRole }>(
      m,
      'SELECT role FROM desk_members WHERE desk_id = $1 AND user_id = $2',
      [deskId, userId],
    );
    return row?.role ?? null;
  }

  /**
   * Serialises changes to one desk's members, so that two supervisors demoting each other at once cannot both see
   * the other still in place (SQLite's write transaction is serialised already).
   */
  private async lockDesk(m: EntityManager, deskId: number): Promise<void> {
    const lock = this.db.pg ? ' FOR UPDATE' : '';
    const desk = await this.db.queryOne(m, `SELECT id FROM desks WHERE id = $1${lock}`, [deskId]);
    if (!desk) throw new AuthNotFound(`no desk ${deskId}`);
  }

  private async keepASupervisor(m: EntityManager, deskId: number): Promise<void> {
    const row = await this.db.queryOne<{ n: DbInt }>(
      m,
      `SELECT COUNT(*) AS n FROM desk_members WHERE desk_id = $1 AND role = 'supervisor'`,
      [deskId],
    );
    if (Number(row?.n ?? 0) <= 1)
      throw new AuthConflict(`the desk keeps at least one supervisor: make another member supervisor first`);
  }
}

import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService, type AuditActor } from '#audit';
import { Database, type MemberRole } from '#database';
import { AuthConflict, AuthError, AuthNotFound } from '../auth.service.js';
import type { DeskAccess, DeskScopeKind } from './desk-scope.decorator.js';
import { MembershipRepository, type MemberView } from './membership.repository.js';

export type { MemberView } from './membership.repository.js';

/** Which kinds of scoped thing have a UUID for an id (the others a whole number). */
const UUID_KINDS: ReadonlySet<DeskScopeKind> = new Set(['lease', 'import']);

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const MAX_ID = 2_147_483_647;

/**
 * Desk memberships (`desk_members`): who holds which role on which desk. The guard asks it for the desk and the
 * caller's role on every desk-scoped request; desk supervisors and admins change it through the members routes.
 */
@Injectable()
export class MembershipService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(MembershipRepository) private readonly members: MembershipRepository,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  /**
   * The desk that `id` (a desk, item, lease, import or verdict id as written in the path) belongs to, with the
   * user's role there; null when there is no such thing. Throws {@link AuthError} when `id` cannot be one.
   */
  async access(kind: DeskScopeKind, id: string, userId: number): Promise<DeskAccess | null> {
    const uuid = UUID_KINDS.has(kind);
    if (uuid ? !UUID.test(id) : !/^\d{1,10}$/.test(id) || Number(id) > MAX_ID)
      throw new AuthError(`${kind} id: expected ${uuid ? 'a UUID' : 'a whole number'}, got ${JSON.stringify(id)}`);
    return this.members.access(kind, uuid ? id.toLowerCase() : Number(id), userId);
  }

  /** The ids of the desks on which the user holds one of `roles` (any role when omitted). */
  deskIdsOf(userId: number, roles?: readonly MemberRole[]): Promise<number[]> {
    return this.members.deskIdsOf(userId, roles);
  }

  /** The user's role on each desk they are a member of. */
  rolesOf(userId: number): Promise<Map<number, MemberRole>> {
    return this.members.rolesOf(userId);
  }

  list(deskId: number): Promise<MemberView[]> {
    return this.members.list(deskId);
  }

  /** Makes a user a member of a desk inside the caller's transaction (a new desk's creator, the demo accounts). */
  async enrol(m: EntityManager, actor: AuditActor, deskId: number, userId: number, role: MemberRole): Promise<void> {
    const before = await this.members.roleIn(m, deskId, userId);
    const now = new Date();
    if (before === null) await this.members.insert(m, deskId, userId, role, now);
    else if (before !== role) await this.members.changeRole(m, deskId, userId, role, now);
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
      if (!(await this.members.enrollable(m, userId))) throw new AuthNotFound(`no user ${userId}`);
      const before = await this.members.roleIn(m, deskId, userId);
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
      const before = await this.members.roleIn(m, deskId, userId);
      if (before === null) throw new AuthNotFound(`user ${userId} is not a member of desk ${deskId}`);
      if (before === 'supervisor') await this.keepASupervisor(m, deskId);
      await this.members.delete(m, deskId, userId);
      await this.audit.record(m, actor, {
        action: 'member.remove',
        entityType: 'user',
        entityId: userId,
        deskId,
        before: { role: before },
      });
    });
  }

  /**
   * Serialises changes to one desk's members, so that two supervisors demoting each other at once cannot both see
   * the other still in place (SQLite's write transaction is serialised already).
   */
  private async lockDesk(m: EntityManager, deskId: number): Promise<void> {
    if (!(await this.members.lockDesk(m, deskId))) throw new AuthNotFound(`no desk ${deskId}`);
  }

  private async keepASupervisor(m: EntityManager, deskId: number): Promise<void> {
    if ((await this.members.supervisors(m, deskId)) <= 1)
      throw new AuthConflict(`the desk keeps at least one supervisor: make another member supervisor first`);
  }
}

import {
  BadRequestException,
  Controller,
  ForbiddenException,
  Get,
  Inject,
  NotFoundException,
  Query,
} from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { AuthError, CurrentUser, MembershipService, Roles, type Principal } from '#auth';
import { Database, ROLES, type DbInt, type MemberRole } from '#database';
import { AuditListAnswer } from './api.responses.js';

/** A row of `audit_events` as the list query reads it. */
interface AuditRow {
  id: DbInt;
  at: unknown;
  actor_id: DbInt | null;
  actor_name: string;
  action: string;
  entity_type: string;
  entity_id: string;
  desk_id: DbInt | null;
  before: string | null;
  after: string | null;
}

/** The desk roles that read a desk's audit events. */
const READERS: readonly MemberRole[] = ['supervisor', 'auditor'];

/**
 * Reads the append-only audit trail: an admin reads all of it (accounts, sign-ins, every desk); anyone else the
 * events of the desks they supervise or audit.
 */
@ApiTags('audit')
@Controller('api/audit')
export class AuditController {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(MembershipService) private readonly members: MembershipService,
  ) {}

  @Roles(...ROLES)
  @Get()
  @ApiAnswer(AuditListAnswer)
  @ApiQuery({ name: 'deskId', required: false, type: Number, description: 'only this desk’s events' })
  @ApiQuery({ name: 'before', required: false, type: Number, description: 'an event id: the page before it' })
  @ApiQuery({ name: 'limit', required: false, type: Number, description: 'events per page, 1–1000 (default 200)' })
  async list(
    @CurrentUser() user: Principal,
    @Query('deskId') deskId?: string,
    @Query('before') before?: string,
    @Query('limit') limit?: string,
  ): Promise<Answer<typeof AuditListAnswer>> {
    const params: unknown[] = [];
    const where: string[] = [];
    for (const [name, v] of [
      ['deskId', deskId],
      ['before', before],
      ['limit', limit],
    ] as const) {
      if (v !== undefined && !/^\d+$/.test(v)) throw new BadRequestException(`${name}: expected a whole number`);
    }
    if (deskId) {
      if (user.role !== 'admin') await this.mayRead(user, deskId);
      params.push(Number(deskId));
      where.push(`desk_id = $${params.length}`);
    } else if (user.role !== 'admin') {
      const desks = await this.members.deskIdsOf(user.id, READERS);
      if (desks.length === 0) return { events: [] };
      // Whole numbers from the database: safe to write into the statement.
      where.push(`desk_id IN (${desks.join(', ')})`);
    }
    if (before) {
      params.push(Number(before));
      where.push(`id < $${params.length}`);
    }
    const n = Math.min(1000, Math.max(1, Number(limit ?? 200)));
    const rows = await this.db.query<AuditRow>(
      null,
      `SELECT id, at, actor_id, actor_name, action, entity_type, entity_id, desk_id, before, after FROM audit_events ${where.length ? `WHERE ${where.join(' AND ')}` : ''} ORDER BY id DESC LIMIT ${n}`,
      params,
    );
    return {
      events: rows.map((r) => ({
        id: Number(r.id),
        at: this.db.parseTime(r.at),
        actorId: r.actor_id === null ? null : Number(r.actor_id),
        actor: r.actor_name,
        action: r.action,
        entityType: r.entity_type,
        entityId: r.entity_id,
        deskId: r.desk_id === null ? null : Number(r.desk_id),
        before: r.before ? (JSON.parse(r.before) as unknown) : null,
        after: r.after ? (JSON.parse(r.after) as unknown) : null,
      })),
    };
  }

  /** A desk's events are for its supervisors and auditors: 404 to non-members (as every desk route), 403 to reviewers. */
  private async mayRead(user: Principal, deskId: string): Promise<void> {
    let access;
    try {
      access = await this.members.access('desk', deskId, user.id);
    } catch (e) {
      if (e instanceof AuthError) throw new BadRequestException(e.message);
      throw e;
    }
    if (!access || access.role === null) throw new NotFoundException(`no desk ${deskId}`);
    if (!READERS.includes(access.role))
      throw new ForbiddenException(`the ${access.role} role on desk ${deskId} may not read its audit trail`);
  }
}

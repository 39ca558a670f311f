import { BadRequestException, Controller, ForbiddenException, Get, Inject, Query } from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { AuditService } from '#audit';
import { AuthError, CurrentUser, MembershipService, Roles, type Principal } from '#auth';
import { deskOr404, type MemberRole, ROLES } from '#database';
import { AuditListAnswer } from './api.responses.js';

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
    @Inject(AuditService) private readonly audit: AuditService,
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
    for (const [name, v] of [
      ['deskId', deskId],
      ['before', before],
      ['limit', limit],
    ] as const) {
      if (v !== undefined && !/^\d+$/.test(v)) throw new BadRequestException(`${name}: expected a whole number`);
    }
    const n = Math.min(1000, Math.max(1, Number(limit ?? 200)));
    const page = { before: before ? Number(before) : undefined, limit: n };
    if (deskId) {
      if (user.role !== 'admin') await this.mayRead(user, deskId);
      return { events: await this.audit.page({ ...page, deskId: Number(deskId) }) };
    }
    if (user.role === 'admin') return { events: await this.audit.page(page) };
    return { events: await this.audit.page({ ...page, deskIds: await this.members.deskIdsOf(user.id, READERS) }) };
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
    const role = deskOr404(deskId, access?.role);
    if (!READERS.includes(role))
      throw new ForbiddenException(`the ${role} role on desk ${deskId} may not read its audit trail`);
  }
}

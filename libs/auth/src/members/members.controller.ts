import { Body, Controller, Delete, Get, HttpCode, Inject, Param, ParseIntPipe, Put } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, ApiNoContent, type Answer } from '#api-docs';
import { toHttp } from '../auth.controller.js';
import type { Principal } from '../principal.js';
import { CurrentUser, Roles } from '../roles.decorator.js';
import { OnDesk } from './desk-scope.decorator.js';
import { PutMemberDto } from './member.dto.js';
import { MemberAnswer, MemberListAnswer } from './member.responses.js';
import { MembershipService } from './membership.service.js';

/** Who is on a desk and with which role: managed by the desk's supervisors and by admins. */
@ApiTags('members')
@Controller('api/desks/:deskId/members')
export class MembersController {
  constructor(@Inject(MembershipService) private readonly members: MembershipService) {}

  @Roles('supervisor', 'auditor', 'admin')
  @OnDesk()
  @Get()
  @ApiAnswer(MemberListAnswer)
  async list(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof MemberListAnswer>> {
    return { members: await this.members.list(deskId) };
  }

  /** Adds the user to the desk with this role, or changes their role there. */
  @Roles('supervisor', 'admin')
  @OnDesk()
  @Put(':userId')
  @ApiAnswer(MemberAnswer)
  @ApiErrors({ 409: 'the last supervisor of the desk cannot be demoted' })
  async put(
    @CurrentUser() actor: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Param('userId', ParseIntPipe) userId: number,
    @Body() body: PutMemberDto,
  ): Promise<Answer<typeof MemberAnswer>> {
    try {
      return await this.members.put(actor, deskId, userId, body.role);
    } catch (e) {
      toHttp(e);
    }
  }

  @Roles('supervisor', 'admin')
  @OnDesk()
  @Delete(':userId')
  @HttpCode(204)
  @ApiNoContent('the user is no longer a member of the desk')
  @ApiErrors({ 409: 'the last supervisor of the desk cannot be removed' })
  async remove(
    @CurrentUser() actor: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Param('userId', ParseIntPipe) userId: number,
  ): Promise<void> {
    try {
      await this.members.remove(actor, deskId, userId);
    } catch (e) {
      toHttp(e);
    }
  }
}

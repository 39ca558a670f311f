import {
  Body,
  Controller,
  ForbiddenException,
  Get,
  Inject,
  NotFoundException,
  Param,
  ParseIntPipe,
  Patch,
  Post,
} from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, type Answer } from '#api-docs';
import { CurrentDesk, CurrentUser, MembershipService, OnDesk, Roles, type DeskAccess, type Principal } from '#auth';
import { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';
import { CreatedDeskAnswer, DeskAnswer, DeskListAnswer, UpdatedDeskAnswer } from './desk.responses.js';
import { DesksService } from './desks.service.js';

@ApiTags('desks')
@Controller('api/desks')
export class DesksController {
  constructor(
    @Inject(DesksService) private readonly desks: DesksService,
    @Inject(MembershipService) private readonly members: MembershipService,
  ) {}

  @Roles('supervisor')
  @Post()
  @ApiAnswer(CreatedDeskAnswer, { status: 201, description: 'the new desk' })
  @ApiErrors({ 409: 'a desk of that name exists already' })
  async create(@CurrentUser() user: Principal, @Body() body: CreateDeskDto): Promise<Answer<typeof CreatedDeskAnswer>> {
    if (body.startFrom) {
      // The source desk is named in the body, not the path: membership is checked here, with the guard's answers
      // (not a member: the same 404 as no such desk; a reviewer: 403, models are for supervisors and auditors).
      const role = (await this.members.rolesOf(user.id)).get(body.startFrom.deskId);
      if (role === undefined) throw new NotFoundException(`startFrom: no desk ${body.startFrom.deskId}`);
      if (role === 'reviewer')
        throw new ForbiddenException(
          `startFrom: a reviewer of desk ${body.startFrom.deskId} cannot read its models (supervisors and auditors can)`,
        );
    }
    return { ...(await this.desks.create(user, body)), role: 'supervisor' };
  }

  /** The desks the caller is a member of; an admin sees every desk (to manage its members), with a null role. */
  @Roles('reviewer', 'supervisor', 'auditor', 'admin')
  @Get()
  @ApiAnswer(DeskListAnswer)
  async list(@CurrentUser() user: Principal): Promise<Answer<typeof DeskListAnswer>> {
    const roles = await this.members.rolesOf(user.id);
    const desks = await this.desks.list(user.role === 'admin' ? 'all' : [...roles.keys()]);
    return { desks: desks.map((d) => ({ ...d, role: roles.get(d.id) ?? null })) };
  }

  @Roles('reviewer', 'supervisor', 'auditor')
  @OnDesk()
  @Get(':deskId')
  @ApiAnswer(DeskAnswer)
  async get(
    @CurrentDesk() desk: DeskAccess,
    @Param('deskId', ParseIntPipe) deskId: number,
  ): Promise<Answer<typeof DeskAnswer>> {
    return { ...(await this.desks.get(deskId)), role: desk.role };
  }

  @Roles('supervisor')
  @OnDesk()
  @Patch(':deskId')
  @ApiAnswer(UpdatedDeskAnswer)
  @ApiErrors({ 409: 'a desk of that name exists already, or categories cannot change once verdicts exist' })
  async update(
    @CurrentUser() user: Principal,
    @CurrentDesk() desk: DeskAccess,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: UpdateDeskDto,
  ): Promise<Answer<typeof UpdatedDeskAnswer>> {
    return { ...(await this.desks.update(user, deskId, body)), role: desk.role };
  }
}

import { Body, Controller, Get, Inject, Param, ParseIntPipe, Patch, Post } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, type Answer } from '#api-docs';
import { CurrentUser, Roles, type Principal } from '#auth';
import { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';
import { DeskAnswer, DeskListAnswer, UpdatedDeskAnswer } from './desk.responses.js';
import { DesksService } from './desks.service.js';

@ApiTags('desks')
@Controller('api/desks')
export class DesksController {
  constructor(@Inject(DesksService) private readonly desks: DesksService) {}

  @Roles('supervisor')
  @Post()
  @ApiAnswer(DeskAnswer, { status: 201, description: 'the new desk' })
  @ApiErrors({ 409: 'a desk of that name exists already' })
  create(@CurrentUser() user: Principal, @Body() body: CreateDeskDto): Promise<Answer<typeof DeskAnswer>> {
    return this.desks.create(user, body);
  }

  @Roles('reviewer', 'supervisor', 'auditor')
  @Get()
  @ApiAnswer(DeskListAnswer)
  async list(): Promise<Answer<typeof DeskListAnswer>> {
    return { desks: await this.desks.list() };
  }

  @Roles('reviewer', 'supervisor', 'auditor')
  @Get(':deskId')
  @ApiAnswer(DeskAnswer)
  get(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof DeskAnswer>> {
    return this.desks.get(deskId);
  }

  @Roles('supervisor')
  @Patch(':deskId')
  @ApiAnswer(UpdatedDeskAnswer)
  @ApiErrors({ 409: 'a desk of that name exists already, or categories cannot change once verdicts exist' })
  update(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: UpdateDeskDto,
  ): Promise<Answer<typeof UpdatedDeskAnswer>> {
    return this.desks.update(user, deskId, body);
  }
}

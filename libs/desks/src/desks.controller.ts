import { Body, Controller, Get, Inject, Param, ParseIntPipe, Patch, Post } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { CurrentUser, Roles, type Principal } from '#auth';
import { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';
import { DesksService } from './desks.service.js';

@ApiTags('desks')
@Controller('api/desks')
export class DesksController {
  constructor(@Inject(DesksService) private readonly desks: DesksService) {}

  @Roles('supervisor')
  @Post()
  create(@CurrentUser() user: Principal, @Body() body: CreateDeskDto) {
    return this.desks.create(user, body);
  }

  @Roles('reviewer', 'supervisor', 'auditor')
  @Get()
  async list() {
    return { desks: await this.desks.list() };
  }

  @Roles('reviewer', 'supervisor', 'auditor')
  @Get(':deskId')
  get(@Param('deskId', ParseIntPipe) deskId: number) {
    return this.desks.get(deskId);
  }

  @Roles('supervisor')
  @Patch(':deskId')
  update(@CurrentUser() user: Principal, @Param('deskId', ParseIntPipe) deskId: number, @Body() body: UpdateDeskDto) {
    return this.desks.update(user, deskId, body);
  }
}

import { Controller, Get, HttpCode, Inject, Param, ParseIntPipe, ParseUUIDPipe, Post, Req } from '@nestjs/common';
import { ApiConsumes, ApiTags } from '@nestjs/swagger';
import type { Request } from 'express';
import { CurrentUser, Roles, type Principal } from '#auth';
import { ImportsService } from './imports.service.js';

@ApiTags('imports')
@Controller('api')
export class ImportsController {
  constructor(@Inject(ImportsService) private readonly imports: ImportsService) {}

  /**
   * Streams an NDJSON, CSV or JSON-array file (raw body or multipart file) to
   * disk and queues it; answers `{importId}` as soon as the upload is stored.
   */
  @Roles('supervisor')
  @Post('desks/:deskId/imports')
  @HttpCode(202)
  @ApiConsumes('application/x-ndjson', 'text/csv', 'application/json', 'multipart/form-data')
  start(@CurrentUser() user: Principal, @Param('deskId', ParseIntPipe) deskId: number, @Req() req: Request) {
    return this.imports.start(user, deskId, req);
  }

  @Roles('supervisor', 'auditor')
  @Get('desks/:deskId/imports')
  async list(@Param('deskId', ParseIntPipe) deskId: number) {
    return { imports: await this.imports.listForDesk(deskId) };
  }

  @Roles('supervisor', 'auditor')
  @Get('imports/:importId')
  get(@Param('importId', new ParseUUIDPipe()) importId: string) {
    return this.imports.get(importId);
  }
}

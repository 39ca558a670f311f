import { Controller, Get, HttpCode, Inject, Param, ParseIntPipe, ParseUUIDPipe, Post, Req } from '@nestjs/common';
import { ApiConsumes, ApiTags } from '@nestjs/swagger';
import type { Request } from 'express';
import { ApiAnswer, ApiErrors, type Answer } from '#api-docs';
import { CurrentUser, Roles, type Principal, OnDesk } from '#auth';
import { ImportAnswer, ImportListAnswer, ImportStartedAnswer } from './import.responses.js';
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
  @OnDesk()
  @Post('desks/:deskId/imports')
  @HttpCode(202)
  @ApiConsumes('application/x-ndjson', 'text/csv', 'application/json', 'multipart/form-data')
  @ApiAnswer(ImportStartedAnswer, { status: 202, description: 'the file is stored and queued' })
  @ApiErrors({ 415: 'not NDJSON, CSV or JSON (by media type or file extension), or not UTF-8' })
  start(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Req() req: Request,
  ): Promise<Answer<typeof ImportStartedAnswer>> {
    return this.imports.start(user, deskId, req);
  }

  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('desks/:deskId/imports')
  @ApiAnswer(ImportListAnswer)
  async list(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof ImportListAnswer>> {
    return { imports: await this.imports.listForDesk(deskId) };
  }

  @Roles('supervisor', 'auditor')
  @OnDesk('importId')
  @Get('imports/:importId')
  @ApiAnswer(ImportAnswer)
  get(@Param('importId', new ParseUUIDPipe()) importId: string): Promise<Answer<typeof ImportAnswer>> {
    return this.imports.get(importId);
  }
}

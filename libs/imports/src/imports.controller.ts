import {
  Controller,
  Get,
  HttpCode,
  Inject,
  Param,
  ParseIntPipe,
  ParseUUIDPipe,
  Post,
  Query,
  Req,
} from '@nestjs/common';
import { ApiConsumes, ApiQuery, ApiTags } from '@nestjs/swagger';
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
   * The label options may also be fields of the multipart form.
   */
  @Roles('supervisor')
  @OnDesk()
  @Post('desks/:deskId/imports')
  @HttpCode(202)
  @ApiConsumes('application/x-ndjson', 'text/csv', 'application/json', 'multipart/form-data')
  @ApiAnswer(ImportStartedAnswer, { status: 202, description: 'the file is stored and queued' })
  @ApiQuery({
    name: 'labelField',
    required: false,
    type: String,
    description:
      'a column (CSV) or key (JSON, NDJSON) that holds a category name: each labelled row becomes a decided item ' +
      'with a verdict by the system account archive; rows without a label stay open; an unknown category is a row error',
  })
  @ApiQuery({
    name: 'labelDraw',
    required: false,
    enum: ['archive', 'random'],
    description:
      "the labels' draw (default archive): archive labels train and never calibrate; random labels calibrate, and " +
      'need uniformSample=true',
  })
  @ApiQuery({
    name: 'uniformSample',
    required: false,
    enum: ['true', 'false'],
    description:
      'true states that the archive is a uniform random sample of the same stream (required with labelDraw=random); ' +
      'the import records who stated it and when',
  })
  @ApiErrors({
    409: "a person's account is named archive, the name of the system account that gives imported labels",
    415: 'not NDJSON, CSV or JSON (by media type or file extension), or not UTF-8',
  })
  start(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Req() req: Request,
    @Query('labelField') labelField?: string,
    @Query('labelDraw') labelDraw?: string,
    @Query('uniformSample') uniformSample?: string,
  ): Promise<Answer<typeof ImportStartedAnswer>> {
    return this.imports.start(user, deskId, req, { labelField, labelDraw, uniformSample });
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

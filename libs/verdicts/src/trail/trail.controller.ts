import { Controller, Get, Inject, Logger, Param, ParseIntPipe, Query, Res } from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiTextAnswer } from '#api-docs';
import type { Response } from 'express';
import { Roles, OnDesk } from '#auth';
import { csvLine, csvRequest, streamText, UTF8_BOM } from '#exports';
import { TRAIL_COLUMNS, trailCsvLine, type TrailRow } from './trail-format.js';
import { TrailService, trailQuery as pick, type TrailFilter } from './trail.service.js';
import { ApiVerdictFilters } from '../verdict.responses.js';

@ApiTags('agreement')
@Controller('api')
export class TrailController {
  private readonly logger = new Logger('Trail');

  constructor(@Inject(TrailService) private readonly trail: TrailService) {}

  /**
   * Every verdict of the desk (undone ones marked) as CSV (RFC 4180), streamed. Filters: reviewer, category (or
   * abstain), from, to (ISO 8601; to exclusive). Text that a spreadsheet would run as a formula starts with an
   * apostrophe unless `raw=1`; `bom=1` starts the file with a UTF-8 byte order mark.
   */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('desks/:deskId/trail.csv')
  @ApiTextAnswer('text/csv', 'the trail as CSV (RFC 4180, header row), streamed')
  @ApiVerdictFilters()
  @ApiQuery({ name: 'raw', required: false, enum: ['1', '0'], description: 'values exactly as stored (for programs)' })
  @ApiQuery({ name: 'bom', required: false, enum: ['1', '0'], description: 'start with a UTF-8 byte order mark' })
  async csv(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('reviewer') reviewer: string | undefined,
    @Query('reviewerMatch') reviewerMatch: string | undefined,
    @Query('category') category: string | undefined,
    @Query('from') from: string | undefined,
    @Query('to') to: string | undefined,
    @Query('raw') raw: string | undefined,
    @Query('bom') bom: string | undefined,
    @Res() res: Response,
  ): Promise<void> {
    const how = csvRequest({ raw, bom });
    const filter = await this.trail.filter(deskId, pick({ reviewer, reviewerMatch, category, from, to }));
    await this.stream(
      res,
      filter,
      'text/csv; charset=utf-8; header=present',
      `desk-${deskId}-trail.csv`,
      (how.bom ? UTF8_BOM : '') + csvLine(TRAIL_COLUMNS, how.options),
      (r) => trailCsvLine(r, how.options),
    );
  }

  /** The same trail as newline-delimited JSON, one verdict per line, streamed. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('desks/:deskId/trail.ndjson')
  @ApiTextAnswer('application/x-ndjson', 'the trail as NDJSON, one verdict per line, streamed')
  @ApiVerdictFilters()
  async ndjson(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('reviewer') reviewer: string | undefined,
    @Query('reviewerMatch') reviewerMatch: string | undefined,
    @Query('category') category: string | undefined,
    @Query('from') from: string | undefined,
    @Query('to') to: string | undefined,
    @Res() res: Response,
  ): Promise<void> {
    const filter = await this.trail.filter(deskId, pick({ reviewer, reviewerMatch, category, from, to }));
    await this.stream(
      res,
      filter,
      'application/x-ndjson; charset=utf-8',
      `desk-${deskId}-trail.ndjson`,
      '',
      (r) => `${JSON.stringify(r)}\n`,
    );
  }

  /** Streams the filtered trail, page by page, as one download. */
  private async stream(
    res: Response,
    filter: TrailFilter,
    type: string,
    filename: string,
    head: string,
    line: (r: TrailRow) => string,
  ): Promise<void> {
    const rows = this.trail.rows(filter);
    async function* text(): AsyncGenerator<string> {
      if (head) yield head;
      for await (const page of rows) yield page.map(line).join('');
    }
    await streamText(res, type, filename, text(), (e) =>
      this.logger.warn(`trail export of desk ${filter.deskId} stopped: ${e.message}`),
    );
  }
}

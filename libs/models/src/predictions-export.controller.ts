import { Controller, Get, Inject, Logger, Param, ParseIntPipe, Query, Res } from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiTextAnswer } from '#api-docs';
import type { Response } from 'express';
import { Roles, OnDesk } from '#auth';
import { deskOr404 } from '#database';
import { csvLine, csvRequest, streamText, UTF8_BOM } from '#exports';
import { ModelVersionsRepository } from './model-versions.repository.js';
import { PredictionsService } from './predictions.service.js';

const PAGE = 2000;

/**
 * Predictions of the current version for every open item, as CSV or NDJSON,
 * with the set and call at the desk's current target. Streamed page by page.
 */
@ApiTags('models')
@Controller('api/desks/:deskId')
export class PredictionsExportController {
  private readonly logger = new Logger('PredictionsExport');

  constructor(
    @Inject(ModelVersionsRepository) private readonly repository: ModelVersionsRepository,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
  ) {}

  /** Text that a spreadsheet would run as a formula starts with an apostrophe unless `raw=1`; `bom=1` adds a UTF-8 byte order mark. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('predictions.csv')
  @ApiTextAnswer('text/csv', 'the current version’s prediction for every open item, CSV (RFC 4180), streamed')
  @ApiQuery({ name: 'raw', required: false, enum: ['1', '0'], description: 'values exactly as stored (for programs)' })
  @ApiQuery({ name: 'bom', required: false, enum: ['1', '0'], description: 'start with a UTF-8 byte order mark' })
  async csv(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('raw') raw: string | undefined,
    @Query('bom') bom: string | undefined,
    @Res() res: Response,
  ): Promise<void> {
    const how = csvRequest({ raw, bom });
    const { desk, categories, rows } = await this.rows(deskId);
    async function* lines() {
      if (how.bom) yield UTF8_BOM;
      yield csvLine(
        [
          'item_id',
          'external_id',
          'source',
          'model_version',
          'call',
          'set',
          ...categories.map((c) => `p_${c}`),
          'text',
        ],
        how.options,
      );
      for await (const r of rows)
        yield csvLine(
          [
            r.itemId,
            r.externalId,
            r.source,
            r.modelVersion,
            r.call,
            r.set.join('|'),
            ...categories.map((c) => r.probabilities[c]),
            r.text,
          ],
          how.options,
        );
    }
    await streamText(res, 'text/csv; charset=utf-8; header=present', `desk-${desk.id}-predictions.csv`, lines(), (e) =>
      this.stopped(deskId, e),
    );
  }

  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('predictions.ndjson')
  @ApiTextAnswer('application/x-ndjson', 'the same rows as NDJSON, one item per line, streamed')
  async ndjson(@Param('deskId', ParseIntPipe) deskId: number, @Res() res: Response): Promise<void> {
    const { desk, rows } = await this.rows(deskId);
    async function* lines() {
      for await (const r of rows) yield `${JSON.stringify(r)}\n`;
    }
    await streamText(res, 'application/x-ndjson; charset=utf-8', `desk-${desk.id}-predictions.ndjson`, lines(), (e) =>
      this.stopped(deskId, e),
    );
  }

  private stopped(deskId: number, e: Error): void {
    this.logger.warn(`predictions export of desk ${deskId} stopped: ${e.message}`);
  }

  private async rows(deskId: number) {
    const desk = deskOr404(deskId, await this.repository.desk(deskId));
    const model = await this.predictions.current(desk);
    const categories = model?.categories ?? [];
    const repository = this.repository;
    const predictions = this.predictions;
    async function* rows() {
      if (!model) return;
      for (let after = 0; ;) {
        const page = await repository.openPredictionsShown(deskId, model.version, after, PAGE);
        for (const r of page) {
          const shown = predictions.show(desk, model, JSON.parse(r.probabilities) as number[]);
          yield {
            itemId: r.itemId,
            externalId: r.externalId,
            source: r.source,
            modelVersion: model.version,
            call: shown.call,
            set: shown.set,
            probabilities: shown.probabilities,
            text: r.text,
          };
        }
        if (page.length < PAGE) return;
        after = page[page.length - 1].itemId;
      }
    }
    return { desk, categories, rows: rows() };
  }
}

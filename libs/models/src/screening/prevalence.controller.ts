import { BadRequestException, Controller, Get, Inject, Param, ParseIntPipe, Query, Res } from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import type { Response } from 'express';
import { ApiAnswer, ApiTextAnswer, type Answer } from '#api-docs';
import { OnDesk, Roles } from '#auth';
import { deskOr404 } from '#database';
import { csvLine, csvRequest, UTF8_BOM } from '#exports';
import { ModelVersionsRepository } from '../model-versions.repository.js';
import { PrevalenceAnswer } from './prevalence.responses.js';
import { PERIOD_BASES, PERIODS, PrevalenceService, type Period, type Prevalence } from './prevalence.service.js';
import type { PeriodBasis } from './screening.repository.js';

function choice<T extends string>(name: string, value: string | undefined, allowed: readonly T[], def: T): T {
  if (value === undefined || value === '') return def;
  if (!(allowed as readonly string[]).includes(value))
    throw new BadRequestException(`${name}: expected one of ${allowed.join(', ')}, got ${JSON.stringify(value)}`);
  return value as T;
}

const periodQuery = ApiQuery({ name: 'period', required: false, enum: PERIODS, description: 'default week' });
const byQuery = ApiQuery({
  name: 'by',
  required: false,
  enum: PERIOD_BASES,
  description: 'periods of the posting time (default) or of the import time',
});

@ApiTags('models')
@Controller('api/desks/:deskId')
export class PrevalenceController {
  constructor(
    @Inject(ModelVersionsRepository) private readonly repository: ModelVersionsRepository,
    @Inject(PrevalenceService) private readonly prevalenceService: PrevalenceService,
  ) {}

  /**
   * Each category's share of each period's items with a 95 % interval, by
   * prediction-powered inference from the period's random draws and the
   * current version's probabilities; decided items count with their label.
   */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('prevalence')
  @ApiAnswer(PrevalenceAnswer)
  @periodQuery
  @byQuery
  async prevalence(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('period') period?: string,
    @Query('by') by?: string,
  ): Promise<Answer<typeof PrevalenceAnswer>> {
    return this.figures(deskId, period, by);
  }

  /** The same figures as CSV, one row per period and category. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('prevalence.csv')
  @ApiTextAnswer('text/csv', 'one row per period and category: share, 95 % interval, method, random verdicts')
  @periodQuery
  @byQuery
  @ApiQuery({ name: 'raw', required: false, enum: ['1', '0'], description: 'values exactly as stored (for programs)' })
  @ApiQuery({ name: 'bom', required: false, enum: ['1', '0'], description: 'start with a UTF-8 byte order mark' })
  async csv(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Res() res: Response,
    @Query('period') period?: string,
    @Query('by') by?: string,
    @Query('raw') raw?: string,
    @Query('bom') bom?: string,
  ): Promise<void> {
    const how = csvRequest({ raw, bom });
    const p = await this.figures(deskId, period, by);
    // A few lines per period and category: sent in one piece.
    const lines: string[] = [];
    if (how.bom) lines.push(UTF8_BOM);
    lines.push(
      csvLine(
        [
          'period_start',
          'period',
          'by',
          'category',
          'items',
          'share',
          'lower',
          'upper',
          'method',
          'random_verdicts',
          'decided_by_other_draws',
          'model_version',
        ],
        how.options,
      ),
    );
    for (const r of p.periods)
      for (const c of p.categories) {
        const f = r.perCategory[c];
        lines.push(
          csvLine(
            [
              r.start,
              p.period,
              p.by,
              c,
              r.items,
              f.share,
              f.lower,
              f.upper,
              f.method,
              f.randomVerdicts,
              r.decided,
              p.modelVersion,
            ],
            how.options,
          ),
        );
      }
    res.status(200);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('Content-Disposition', `attachment; filename="desk-${deskId}-prevalence-${p.period}.csv"`);
    res.setHeader('Cache-Control', 'no-store');
    res.send(lines.join(''));
  }

  private async figures(deskId: number, period?: string, by?: string): Promise<Prevalence> {
    const p = choice<Period>('period', period, PERIODS, 'week');
    const b = choice<PeriodBasis>('by', by, PERIOD_BASES, 'posted');
    const desk = deskOr404(deskId, await this.repository.desk(deskId));
    return this.prevalenceService.prevalence(desk, await this.repository.categoryNames(deskId), p, b);
  }
}

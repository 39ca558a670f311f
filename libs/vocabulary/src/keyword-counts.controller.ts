import { BadRequestException, Controller, Get, Inject, Param, ParseIntPipe, Query } from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { OnDesk, Roles } from '#auth';
import { KeywordCountsAnswer } from './keyword-counts.responses.js';
import { KeywordCountsService } from './keyword-counts.service.js';
import { KEYWORD_DATES, KEYWORD_PERIODS, type KeywordDate, type KeywordPeriod } from './keyword-days.js';

@ApiTags('desks')
@Controller('api/desks/:deskId/keyword-counts')
export class KeywordCountsController {
  constructor(@Inject(KeywordCountsService) private readonly keywordCounts: KeywordCountsService) {}

  /** Per period and category: items matching the seed terms, and their precision and recall on the random draws. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get()
  @ApiAnswer(KeywordCountsAnswer)
  @ApiQuery({ name: 'period', required: false, enum: KEYWORD_PERIODS, description: 'default week' })
  @ApiQuery({
    name: 'by',
    required: false,
    enum: KEYWORD_DATES,
    description: 'which date places an item; default posted',
  })
  counts(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('period') period?: string,
    @Query('by') by?: string,
  ): Promise<Answer<typeof KeywordCountsAnswer>> {
    const p = period ?? 'week';
    const b = by ?? 'posted';
    const problems: string[] = [];
    if (!(KEYWORD_PERIODS as readonly string[]).includes(p))
      problems.push(`period: expected one of ${KEYWORD_PERIODS.join(', ')}`);
    if (!(KEYWORD_DATES as readonly string[]).includes(b))
      problems.push(`by: expected one of ${KEYWORD_DATES.join(', ')}`);
    if (problems.length > 0) throw new BadRequestException(problems);
    return this.keywordCounts.counts(deskId, p as KeywordPeriod, b as KeywordDate);
  }
}

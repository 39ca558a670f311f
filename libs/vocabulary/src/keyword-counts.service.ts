import { Inject, Injectable } from '@nestjs/common';
import { DesksService } from '#desks';
import { keywordFigures, type KeywordDate, type KeywordPeriod, type KeywordPeriodFigures } from './keyword-days.js';
import { TermStatisticsRepository } from './term-statistics.repository.js';
import { seedTermsKey } from './term-statistics.service.js';

export interface KeywordCounts {
  period: KeywordPeriod;
  by: KeywordDate;
  computedAt: Date | null;
  /** True when the seed terms changed after the last count: the counts are of the earlier terms until the next one. */
  stale: boolean;
  itemsCounted: number;
  /** Items without a posting date (left out when `by` is `posted`). */
  undated: number;
  categories: string[];
  periods: KeywordPeriodFigures[];
  total: Omit<KeywordPeriodFigures, 'start'>;
  method: string;
}

const METHOD =
  'matches: items of the period that match any of the category’s seed terms (counted by the worker with the word statistics); ' +
  'precision and recall: over the items of the period drawn uniformly at random for review that still hold their text, ' +
  'with the category of their latest random-draw verdict (a settlement overrides it), Wilson 95 % intervals. ' +
  'The random draws are uniform over the items open when drawn, not over the whole period.';

/** Keyword counts over time, with how far they over- and under-count measured on the random draws. */
@Injectable()
export class KeywordCountsService {
  constructor(
    @Inject(TermStatisticsRepository) private readonly repository: TermStatisticsRepository,
    @Inject(DesksService) private readonly desks: DesksService,
  ) {}

  async counts(deskId: number, period: KeywordPeriod, by: KeywordDate): Promise<KeywordCounts> {
    const desk = await this.desks.get(deskId);
    const stored = await this.repository.load(deskId);
    const days = stored?.keywordDays ?? null;
    if (stored === undefined || days === null) {
      const none = { items: 0, randomVerdicts: 0, perCategory: {} };
      return {
        period,
        by,
        computedAt: null,
        stale: false,
        itemsCounted: 0,
        undated: 0,
        categories: [],
        periods: [],
        total: none,
        method: METHOD,
      };
    }
    const draws = await this.repository.randomDraws(deskId);
    const { periods, total } = keywordFigures(days, desk.seedTerms, draws, period, by);
    return {
      period,
      by,
      computedAt: stored.computedAt,
      stale: stored.seedTermsKey !== seedTermsKey(desk.seedTerms),
      itemsCounted: stored.itemsCounted,
      undated: days.undated,
      categories: days.categories,
      periods,
      total,
      method: METHOD,
    };
  }
}

import { Module } from '@nestjs/common';
import { DesksModule } from '#desks';
import { ModelsCoreModule } from '#models';
import { KeywordCountsController } from './keyword-counts.controller.js';
import { KeywordCountsService } from './keyword-counts.service.js';
import { TermStatisticsRepository } from './term-statistics.repository.js';
import { TermStatisticsService } from './term-statistics.service.js';
import { TermSuggestionsController } from './term-suggestions.controller.js';
import { TermSuggestionsService } from './term-suggestions.service.js';

/** HTTP side: reading suggestions, accepting and dismissing them; keyword counts over time. */
@Module({
  imports: [DesksModule, ModelsCoreModule],
  controllers: [TermSuggestionsController, KeywordCountsController],
  providers: [TermStatisticsRepository, TermSuggestionsService, KeywordCountsService],
})
export class VocabularyModule {}

/** Worker side: the count job. */
@Module({
  imports: [ModelsCoreModule],
  providers: [TermStatisticsRepository, TermStatisticsService],
  exports: [TermStatisticsService],
})
export class VocabularyWorkModule {}

export { VocabularyModule, VocabularyWorkModule } from './vocabulary.module.js';
export { TermStatisticsService } from './term-statistics.service.js';
export {
  TERM_MIN_COUNT,
  TERM_ROW_ENTRIES,
  TERM_TRACKED_WORDS,
  TERM_VOCABULARY_SIZE,
  TERM_WINDOW,
} from './term-settings.js';
export { TermSuggestionsService, MIN_SUGGESTION_ITEMS } from './term-suggestions.service.js';
export { decodeTermStatistics, encodeTermStatistics, type TermStatistics } from './term-statistics.codec.js';
export { termLeanings } from './term-leaning.js';

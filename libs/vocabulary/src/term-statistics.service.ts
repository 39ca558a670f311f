import { createHash } from 'node:crypto';
import { Inject, Injectable, Logger } from '@nestjs/common';
import {
  CooccurrenceCounter,
  createPhraseJoiner,
  parseSeedTerm,
  keepLargestPerRow,
  ppmi,
  VocabularyCounter,
  type Featurizer,
} from '#learning';
import { DeskFeaturesService, ModelStore } from '#models';
import { KeywordDayCounter } from './keyword-days.js';
import { EXAMPLES_PER_WORD, encodeTermStatistics } from './term-statistics.codec.js';
import { TermStatisticsRepository } from './term-statistics.repository.js';
import { termLeanings } from './term-leaning.js';
import {
  TERM_MIN_COUNT,
  TERM_ROW_ENTRIES,
  TERM_TRACKED_WORDS,
  TERM_VOCABULARY_SIZE,
  TERM_WINDOW,
} from './term-settings.js';

const PAGE = 1000;

/**
 * The token key of a seed term: its tokens under the desk's tokeniser, joined
 * by one space, and `*` after the last when the term takes any ending of its
 * last word (the count job then counts every form as that one token).
 */
export function seedTermKey(featurizer: Featurizer, term: string): string {
  const tokens = featurizer.tokens(term);
  if (tokens.length === 0) return '';
  return tokens.join(' ') + (parseSeedTerm(term).anyEnding ? '*' : '');
}

/** A hash of a desk's seed terms: the stored statistics say which terms they were counted for. */
export function seedTermsKey(seedTerms: Record<string, string[]>): string {
  return createHash('sha256').update(JSON.stringify(seedTerms)).digest('hex');
}

/**
 * The count job of the seed-term suggestions: two streaming passes over the
 * desk's pool in pages of {@link PAGE} items (the first counts words, the
 * second counts pairs within {@link TERM_WINDOW} tokens among the kept
 * words), multi-word seed terms joined into single tokens, then PPMI with
 * context-distribution smoothing 0.75, a few example items per word and, when
 * a model is current, how it leans each word. The result replaces the desk's
 * stored statistics in one write.
 */
@Injectable()
export class TermStatisticsService {
  private readonly logger = new Logger('TermStatistics');

  constructor(
    @Inject(TermStatisticsRepository) private readonly repository: TermStatisticsRepository,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
    @Inject(ModelStore) private readonly models: ModelStore,
  ) {}

  async run(deskId: number): Promise<Record<string, number> | null> {
    const started = performance.now();
    const found = await this.repository.desk(deskId);
    if (!found) return null;
    const { desk, categories } = found;
    const featurizer = this.features.featurizer();
    const seedKeys = [
      ...new Set(
        Object.values(desk.seedTerms)
          .flat()
          .map((t) => seedTermKey(featurizer, t))
          .filter((k) => k.length > 0),
      ),
    ];
    const join = createPhraseJoiner(seedKeys.map((k) => k.split(' ')));
    const watermark = await this.repository.itemWatermark(deskId);
    const tokensOf = (text: string) => join(featurizer.tokens(text));

    const words = new VocabularyCounter({ maxTracked: TERM_TRACKED_WORDS });
    const keywordDays = new KeywordDayCounter(
      desk.seedTerms,
      categories.map((c) => c.name),
    );
    let items = 0;
    for await (const page of this.pages(deskId, watermark)) {
      for (const item of page) {
        words.add(tokensOf(item.text));
        keywordDays.add(item);
      }
      items += page.length;
    }
    const vocabulary = words.vocabulary({ size: TERM_VOCABULARY_SIZE, minCount: TERM_MIN_COUNT, keep: seedKeys });
    const firstPassMs = performance.now() - started;

    const counter = new CooccurrenceCounter(vocabulary, { window: TERM_WINDOW });
    const examples = new Int32Array(vocabulary.length * EXAMPLES_PER_WORD);
    const filled = new Uint8Array(vocabulary.length);
    for await (const page of this.pages(deskId, watermark)) {
      for (const item of page) {
        const tokens = tokensOf(item.text);
        counter.add(tokens);
        for (const token of new Set(tokens)) {
          const w = counter.indexOf(token);
          if (w >= 0 && filled[w] < EXAMPLES_PER_WORD) examples[w * EXAMPLES_PER_WORD + filled[w]++] = item.id;
        }
      }
    }
    const pairs = counter.pairCount;
    const table = counter.table();
    const rows = keepLargestPerRow(ppmi(table.counts), TERM_ROW_ENTRIES);
    const countMs = performance.now() - started - firstPassMs;

    const leaningStart = performance.now();
    const model = desk.currentModelVersion === null ? null : await this.models.load(deskId, desk.currentModelVersion);
    const leanings = model ? termLeanings(model, vocabulary) : new Float32Array(0);
    const data = encodeTermStatistics({
      words: vocabulary,
      documents: Uint32Array.from(table.documents),
      ppmi: rows,
      examples,
      leaningCategories: model ? model.categories : [],
      leanings,
    });
    const leaningMs = performance.now() - leaningStart;
    const figures = {
      items,
      vocabulary: vocabulary.length,
      pairs,
      storedEntries: rows.values.length,
      bytes: data.length,
      prunings: words.prunings,
      firstPassMs: Math.round(firstPassMs),
      countMs: Math.round(countMs),
      leaningMs: Math.round(leaningMs),
      totalMs: Math.round(performance.now() - started),
      categories: categories.length,
    };
    await this.repository.store({
      deskId,
      computedAt: new Date(),
      itemWatermark: watermark,
      itemsCounted: items,
      seedTermsKey: seedTermsKey(desk.seedTerms),
      modelVersion: model ? model.version : null,
      vocabularySize: vocabulary.length,
      figures,
      data,
      keywordDays: keywordDays.result(),
    });
    this.logger.log(
      `desk ${deskId}: term statistics of ${items} items, ${vocabulary.length} words in ${figures.totalMs} ms`,
    );
    return figures;
  }

  private async *pages(
    deskId: number,
    watermark: number,
  ): AsyncGenerator<Array<{ id: number; text: string; postedAt: Date | null; importedAt: Date }>> {
    let after = 0;
    for (;;) {
      const page = await this.repository.itemPage(deskId, after, watermark, PAGE);
      if (page.length === 0) return;
      yield page;
      after = page[page.length - 1].id;
    }
  }
}

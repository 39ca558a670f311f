import { isoTime, named, z } from '#api-docs';

const snippet = z.strictObject({
  itemId: z.int(),
  text: z.string().describe('a short passage of the item around the term'),
  start: z.int().describe('where the term starts in `text` (UTF-16 index)'),
  end: z.int().describe('where it ends (exclusive)'),
});

const suggestion = z.strictObject({
  term: z.string(),
  similarity: z
    .number()
    .nullable()
    .describe('mean cosine of its PPMI row with the seed terms’ rows; null for a suggestion from the model'),
  count: z.int().describe('items of the pool that hold it'),
  leaning: z
    .number()
    .nullable()
    .describe('change in the log-odds of the category the model gives a text of this term alone; null without a model'),
  towardsCategory: z.boolean().nullable().describe('leaning > 0: the model weighs the term towards the category'),
  snippets: z.array(snippet),
});

/** Seed-term suggestions for one category. */
export const TermSuggestionsAnswer = named(
  'TermSuggestions',
  z.strictObject({
    category: z.string(),
    computedAt: isoTime.nullable().describe('when the pool was last counted; null: not yet'),
    itemsCounted: z.int(),
    vocabularySize: z.int(),
    modelVersion: z.int().nullable().describe('the version whose leanings are shown'),
    seedTerms: z.array(z.string()),
    seedTermsNotCounted: z
      .array(z.string())
      .describe('seed terms the last count did not see (added since, or absent from the pool)'),
    similar: z.array(suggestion).describe('words used like the seed terms, most similar first'),
    fromModel: z.array(suggestion).describe('words the model leans most towards the category'),
  }),
);

export const TermDecisionAnswer = named(
  'TermDecision',
  z.strictObject({
    category: z.string(),
    term: z.string(),
    decision: z.enum(['accepted', 'dismissed']),
    changed: z.boolean().describe('false when it was a seed term, or dismissed, already'),
    seedTerms: z.array(z.string()).describe('the category’s seed terms now'),
  }),
);

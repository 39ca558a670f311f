/** Settings of the count job of the seed-term suggestions (no imports: the benchmark reads them too). */

/**
 * Words kept for a desk's statistics (the seed terms always among them). The
 * co-occurrence table is at most this squared; at 100 000 generated posts
 * the job stays within the figures of DEVELOPERS.md.
 */
export const TERM_VOCABULARY_SIZE = 20_000;
/** Distinct words tracked while the vocabulary is counted (pruned to the most frequent half beyond). */
export const TERM_TRACKED_WORDS = 8 * TERM_VOCABULARY_SIZE;
/** Words seen fewer times are not counted (their PPMI rows are noise). */
export const TERM_MIN_COUNT = 2;
/** Context window: tokens on each side. */
export const TERM_WINDOW = 2;
/** Largest PPMI entries kept per word in the stored rows. */
export const TERM_ROW_ENTRIES = 200;

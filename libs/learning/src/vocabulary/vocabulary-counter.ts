/** Default number of words kept for co-occurrence statistics. */
export const DEFAULT_VOCABULARY_SIZE = 20_000;

export interface VocabularyCounterOptions {
  /**
   * Most distinct words tracked while counting (default 8 × {@link DEFAULT_VOCABULARY_SIZE}).
   * When the table grows past it, it keeps the half with the largest counts.
   */
  maxTracked?: number;
}

export interface VocabularyOptions {
  /** Largest vocabulary returned, forced words included (default {@link DEFAULT_VOCABULARY_SIZE}). */
  size?: number;
  /** Words seen fewer times are left out (default 1). Forced words are kept whatever their count. */
  minCount?: number;
  /** Words always kept (the seed terms), first in the result, in the order given. */
  keep?: readonly string[];
}

/**
 * Counts word occurrences over a stream of token lists in bounded memory and
 * returns the most frequent words. The table of distinct words is pruned to
 * the most frequent half whenever it exceeds `maxTracked`; a pruned word that
 * comes back starts again from zero, so its count is an underestimate. Words
 * frequent throughout the stream survive every pruning; only words that rise
 * late from rarity can be missed. (Pruning by frequency is a simplification of
 * the frequent-items counters of Misra & Gries 1982 and Manku & Motwani 2002,
 * without their error bound.)
 */
export class VocabularyCounter {
  private readonly counts = new Map<string, number>();
  private readonly maxTracked: number;
  private pruned = 0;

  constructor(options: VocabularyCounterOptions = {}) {
    const maxTracked = options.maxTracked ?? 8 * DEFAULT_VOCABULARY_SIZE;
    if (!Number.isInteger(maxTracked) || maxTracked < 2) {
      throw new RangeError(`maxTracked must be an integer ≥ 2, got ${maxTracked}`);
    }
    this.maxTracked = maxTracked;
  }

  /** Counts the tokens of one document. */
  add(tokens: readonly string[]): void {
    for (const token of tokens) this.counts.set(token, (this.counts.get(token) ?? 0) + 1);
    if (this.counts.size > this.maxTracked) this.prune();
  }

  /** How many times the table was pruned (0: every count is exact). */
  get prunings(): number {
    return this.pruned;
  }

  /** Distinct words currently tracked. */
  get tracked(): number {
    return this.counts.size;
  }

  /**
   * The vocabulary: forced words first, then the most frequent others (ties by
   * code-unit order, so the result does not depend on arrival order).
   */
  vocabulary(options: VocabularyOptions = {}): string[] {
    const size = options.size ?? DEFAULT_VOCABULARY_SIZE;
    const minCount = options.minCount ?? 1;
    if (!Number.isInteger(size) || size < 1) throw new RangeError(`size must be a positive integer, got ${size}`);
    if (!Number.isInteger(minCount) || minCount < 1) {
      throw new RangeError(`minCount must be a positive integer, got ${minCount}`);
    }
    const out: string[] = [];
    const seen = new Set<string>();
    for (const word of options.keep ?? []) {
      if (!seen.has(word)) {
        seen.add(word);
        out.push(word);
      }
    }
    if (out.length > size) throw new RangeError(`keep holds ${out.length} words, more than size ${size}`);
    const rest = [...this.counts]
      .filter(([word, count]) => count >= minCount && !seen.has(word))
      .sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0));
    for (const [word] of rest) {
      if (out.length >= size) break;
      out.push(word);
    }
    return out;
  }

  private prune(): void {
    const sorted = [...this.counts.values()].sort((a, b) => b - a);
    const threshold = sorted[Math.floor(this.maxTracked / 2)];
    for (const [word, count] of this.counts) if (count <= threshold) this.counts.delete(word);
    this.pruned++;
  }
}

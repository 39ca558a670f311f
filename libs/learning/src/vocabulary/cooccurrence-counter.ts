import type { SparseMatrix } from './sparse-matrix.js';

/** Default context window: two tokens on each side. */
export const DEFAULT_CONTEXT_WINDOW = 2;

export interface CooccurrenceOptions {
  /** Tokens on each side counted as context, 1…10 (default {@link DEFAULT_CONTEXT_WINDOW}). */
  window?: number;
}

/** Word × context counts over a fixed vocabulary (rows and columns are the same words). */
export interface CooccurrenceTable {
  readonly words: readonly string[];
  /** Symmetric counts: entry (w, c) is how often c stood within the window of w. */
  readonly counts: SparseMatrix;
  /** Occurrences of each word in the documents counted. */
  readonly occurrences: Float64Array;
  /** Documents that hold each word at least once. */
  readonly documents: Float64Array;
  /** Documents counted. */
  readonly documentCount: number;
}

/**
 * Counts, over a stream of token lists, how often each vocabulary word occurs
 * within `window` tokens of another (a symmetric, unweighted window, as in
 * Levy, Goldberg & Dagan 2015). Tokens outside the vocabulary are not counted
 * but keep their place, so distances are those of the text. Memory grows with
 * the distinct pairs seen, at most vocabulary² .
 */
export class CooccurrenceCounter {
  private readonly index = new Map<string, number>();
  private readonly pairs = new Map<number, number>();
  private readonly occurrences: Float64Array;
  private readonly documents: Float64Array;
  private readonly window: number;
  private documentCount = 0;
  private ids = new Int32Array(64);

  constructor(
    private readonly words: readonly string[],
    options: CooccurrenceOptions = {},
  ) {
    const window = options.window ?? DEFAULT_CONTEXT_WINDOW;
    if (!Number.isInteger(window) || window < 1 || window > 10) {
      throw new RangeError(`window must be an integer in 1…10, got ${window}`);
    }
    // Pair keys are row · size + column: exact below 2^53.
    if (words.length > 50_000_000) throw new RangeError(`vocabulary too large: ${words.length}`);
    this.window = window;
    words.forEach((w, i) => {
      if (this.index.has(w)) throw new RangeError(`the vocabulary lists ${JSON.stringify(w)} twice`);
      this.index.set(w, i);
    });
    this.occurrences = new Float64Array(words.length);
    this.documents = new Float64Array(words.length);
  }

  /** Index of a word in the vocabulary, or -1. */
  indexOf(word: string): number {
    return this.index.get(word) ?? -1;
  }

  /** Counts one document's tokens. */
  add(tokens: readonly string[]): void {
    if (this.ids.length < tokens.length) this.ids = new Int32Array(tokens.length * 2);
    const ids = this.ids;
    const size = this.words.length;
    const seen = new Set<number>();
    for (let i = 0; i < tokens.length; i++) {
      const id = this.index.get(tokens[i]) ?? -1;
      ids[i] = id;
      if (id >= 0) {
        this.occurrences[id]++;
        seen.add(id);
      }
    }
    for (const id of seen) this.documents[id]++;
    this.documentCount++;
    for (let i = 0; i < tokens.length; i++) {
      const w = ids[i];
      if (w < 0) continue;
      const end = Math.min(tokens.length, i + this.window + 1);
      for (let j = i + 1; j < end; j++) {
        const c = ids[j];
        if (c < 0) continue;
        // Both directions: c is in w's window and w in c's.
        const a = w * size + c;
        const b = c * size + w;
        this.pairs.set(a, (this.pairs.get(a) ?? 0) + 1);
        this.pairs.set(b, (this.pairs.get(b) ?? 0) + 1);
      }
    }
  }

  /** Distinct (word, context) pairs counted so far. */
  get pairCount(): number {
    return this.pairs.size;
  }

  /** The counts so far as a CSR table. */
  table(): CooccurrenceTable {
    const size = this.words.length;
    const keys = Float64Array.from(this.pairs.keys()).sort();
    const rowStart = new Int32Array(size + 1);
    const columnIndex = new Int32Array(keys.length);
    const values = new Float64Array(keys.length);
    for (let k = 0; k < keys.length; k++) {
      const key = keys[k];
      const row = Math.floor(key / size);
      columnIndex[k] = key - row * size;
      values[k] = this.pairs.get(key)!;
      rowStart[row + 1]++;
    }
    for (let r = 0; r < size; r++) rowStart[r + 1] += rowStart[r];
    return {
      words: this.words,
      counts: { rows: size, columns: size, rowStart, columnIndex, values },
      occurrences: this.occurrences.slice(),
      documents: this.documents.slice(),
      documentCount: this.documentCount,
    };
  }
}

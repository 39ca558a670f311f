import type { SparseMatrix } from '#learning';

/** Examples (item ids) kept per word for snippets. */
export const EXAMPLES_PER_WORD = 3;

/** What the count job stores for a desk: the words, their PPMI rows, counts, examples and model leanings. */
export interface TermStatistics {
  /** Vocabulary: single tokens and the multi-word seed terms (tokens joined by one space). */
  words: string[];
  /** Items that hold each word. */
  documents: Uint32Array;
  /** PPMI rows (words × words). */
  ppmi: SparseMatrix;
  /** EXAMPLES_PER_WORD item ids per word (0: none). */
  examples: Int32Array;
  /** Category names of the leaning columns ([] when no model was current). */
  leaningCategories: string[];
  /** leanings[w · k + c]: how the model moves the log-odds of category c for a text of word w alone. */
  leanings: Float32Array;
}

const MAGIC = 0x31535443; // "CTS1" little-endian: format 1
interface Header {
  words: string[];
  leaningCategories: string[];
  entries: number;
}

/**
 * Binary layout: magic, header length, JSON header (words, leaning categories,
 * entry count), padding to 4 bytes, then documents (u32 × V), rowStart
 * (i32 × V+1), columnIndex (i32 × E), values (f32 × E), examples (i32 × 3V),
 * leanings (f32 × V·K). PPMI values are kept as 32-bit floats: rankings need
 * no more, and the row is half the size.
 */
export function encodeTermStatistics(s: TermStatistics): Buffer {
  const v = s.words.length;
  const k = s.leaningCategories.length;
  const entries = s.ppmi.values.length;
  if (s.documents.length !== v || s.ppmi.rows !== v || s.examples.length !== v * EXAMPLES_PER_WORD) {
    throw new RangeError('term statistics: arrays do not match the vocabulary');
  }
  if (s.leanings.length !== v * k) throw new RangeError('term statistics: leanings do not match words × categories');
  const header = Buffer.from(
    JSON.stringify({ words: s.words, leaningCategories: s.leaningCategories, entries } satisfies Header),
  );
  const headerEnd = 8 + header.length;
  const start = headerEnd + ((4 - (headerEnd % 4)) % 4);
  const size = start + 4 * (v + (v + 1) + entries + entries + EXAMPLES_PER_WORD * v + v * k);
  const out = Buffer.alloc(size);
  out.writeUInt32LE(MAGIC, 0);
  out.writeUInt32LE(header.length, 4);
  header.copy(out, 8);
  let at = start;
  const put = (a: Uint32Array | Int32Array | Float32Array) => {
    Buffer.from(a.buffer, a.byteOffset, a.byteLength).copy(out, at);
    at += a.byteLength;
  };
  put(s.documents);
  put(s.ppmi.rowStart);
  put(s.ppmi.columnIndex);
  put(Float32Array.from(s.ppmi.values));
  put(s.examples);
  put(s.leanings);
  return out;
}

/** Reads what {@link encodeTermStatistics} wrote. @throws RangeError on another format. */
export function decodeTermStatistics(data: Uint8Array): TermStatistics {
  const buf = Buffer.from(data.buffer, data.byteOffset, data.byteLength);
  if (buf.length < 8 || buf.readUInt32LE(0) !== MAGIC) throw new RangeError('term statistics: unknown format');
  const headerLength = buf.readUInt32LE(4);
  const header = JSON.parse(buf.subarray(8, 8 + headerLength).toString('utf8')) as Header;
  const v = header.words.length;
  const k = header.leaningCategories.length;
  const headerEnd = 8 + headerLength;
  let at = headerEnd + ((4 - (headerEnd % 4)) % 4);
  // Copied out: the buffer from the driver need not be 4-byte aligned.
  const take = (n: number) => {
    const copy = new Uint8Array(n * 4);
    copy.set(buf.subarray(at, at + n * 4));
    at += n * 4;
    return copy.buffer;
  };
  const documents = new Uint32Array(take(v));
  const rowStart = new Int32Array(take(v + 1));
  const columnIndex = new Int32Array(take(header.entries));
  const values = Float64Array.from(new Float32Array(take(header.entries)));
  const examples = new Int32Array(take(EXAMPLES_PER_WORD * v));
  const leanings = new Float32Array(take(v * k));
  if (at !== buf.length) throw new RangeError('term statistics: length does not match the header');
  return {
    words: header.words,
    documents,
    ppmi: { rows: v, columns: v, rowStart, columnIndex, values },
    examples,
    leaningCategories: header.leaningCategories,
    leanings,
  };
}

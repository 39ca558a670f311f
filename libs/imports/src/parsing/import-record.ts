/**
 * The shapes shared by every import format: what a parsed row looks like,
 * why a row is rejected, the options and their limits, and the fatal error.
 */

/** The three accepted file formats. */
export type ImportFormat = 'ndjson' | 'csv' | 'json';

/**
 * One accepted row, ready to become an item.
 *
 * `text` is exactly what the file held (no trimming, no normalisation);
 * `normalizedText` and `textHash` exist only for de-duplication.
 */
export interface ImportRecord {
  /** 1-based row number; what it counts depends on the format (see {@link parseImport}). */
  row: number;
  /** The text as received. Never empty or whitespace-only, never longer than the limit. */
  text: string;
  /** The external id as a string (numbers are converted), or `null` when absent or empty. */
  externalId: string | null;
  /** The source, or `null` when absent or empty. */
  source: string | null;
  /** The parsed `created_at`, or `null` when absent or empty. */
  createdAt: Date | null;
  /** Every other column or key, with its value as given (strings for CSV, JSON values otherwise). */
  meta: Record<string, unknown>;
  /** {@link normalizeText} of `text`. */
  normalizedText: string;
  /** {@link hashNormalizedText} of `normalizedText`. */
  textHash: string;
}

/** A row that cannot be imported, with a reason meant for the person who made the file. */
export interface RejectedRow {
  /** 1-based row number, counted as for {@link ImportRecord.row}. */
  row: number;
  /** One sentence naming the problem (and the column or key concerned, where there is one). */
  reason: string;
}

/** What the parser yields for each row: either a record or a rejection. */
export type ParsedRow = { ok: true; record: ImportRecord } | { ok: false; rejected: RejectedRow };

/** Options of {@link parseImport}. Every limit has a default; all are optional. */
export interface ParseOptions {
  /**
   * Longest accepted text, counted in Unicode code points (not UTF-16 code
   * units, not bytes), so an emoji counts as one. Default 100 000.
   */
  maxTextLength?: number;
  /**
   * Largest accepted size of a row's metadata, in bytes of its UTF-8 JSON
   * serialisation. Default 16 384 (16 KiB).
   */
  maxMetaBytes?: number;
  /**
   * Hard cap on the raw size of one row (an NDJSON line, a CSV record, a
   * JSON array element) in bytes. A longer row is rejected without being
   * held in memory. Default `4 × maxTextLength + 4 × maxMetaBytes + 4096`:
   * UTF-8 needs at most 4 bytes per code point, and the metadata and the
   * other fields get room for quoting and escapes. A text that is within
   * `maxTextLength` but written mostly with `\u` escapes can exceed this cap;
   * raise it explicitly for such files.
   */
  maxRowBytes?: number;
  /** Aborts the parse: the generator throws the signal's reason at its next step. */
  signal?: AbortSignal;
}

/** {@link ParseOptions} with every default applied. */
export interface ResolvedParseOptions {
  maxTextLength: number;
  maxMetaBytes: number;
  maxRowBytes: number;
  signal: AbortSignal | undefined;
}

/** Default of {@link ParseOptions.maxTextLength}. */
export const DEFAULT_MAX_TEXT_LENGTH = 100_000;
/** Default of {@link ParseOptions.maxMetaBytes}. */
export const DEFAULT_MAX_META_BYTES = 16 * 1024;

function checkPositiveInteger(name: string, value: number): void {
  if (!Number.isSafeInteger(value) || value < 1) {
    throw new RangeError(`${name} must be a positive integer, got ${String(value)}`);
  }
}

/**
 * Applies the defaults of {@link ParseOptions} and checks the ranges.
 *
 * @throws RangeError when a limit is not a positive integer.
 */
export function resolveParseOptions(options: ParseOptions = {}): ResolvedParseOptions {
  const maxTextLength = options.maxTextLength ?? DEFAULT_MAX_TEXT_LENGTH;
  const maxMetaBytes = options.maxMetaBytes ?? DEFAULT_MAX_META_BYTES;
  checkPositiveInteger('maxTextLength', maxTextLength);
  checkPositiveInteger('maxMetaBytes', maxMetaBytes);
  const maxRowBytes = options.maxRowBytes ?? 4 * maxTextLength + 4 * maxMetaBytes + 4096;
  checkPositiveInteger('maxRowBytes', maxRowBytes);
  return { maxTextLength, maxMetaBytes, maxRowBytes, signal: options.signal };
}

/**
 * A problem with the file as a whole, after which no further row can be read
 * reliably: a CSV header without a `text` column or with a colliding or
 * duplicated column, a CSV quote that is never closed, a JSON body that is
 * not an array or whose array is never closed, data after the array.
 *
 * {@link parseImport} throws it from the generator. Rows yielded before it
 * were complete and correct; whether to keep them is the caller's decision.
 */
export class ImportFileError extends Error {
  /**
   * The row where the problem was found, counted as for
   * {@link ImportRecord.row} (for CSV header problems: the header's line).
   * `0` when the problem concerns the file as a whole rather than a row,
   * such as a JSON body that is not an array.
   */
  readonly row: number;

  constructor(message: string, row: number) {
    super(message);
    this.name = 'ImportFileError';
    this.row = row;
  }
}

import { readByteChunks, type ImportInput } from './byte-source.js';
import { parseCsv } from './csv-parser.js';
import {
  resolveParseOptions,
  type ImportFormat,
  type ParsedRow,
  type ParseOptions,
  type ResolvedParseOptions,
} from './import-record.js';
import { parseJsonArray } from './json-array-parser.js';
import { parseNdjson } from './ndjson-parser.js';

const PARSERS: Readonly<
  Record<ImportFormat, (chunks: AsyncIterable<Uint8Array>, options: ResolvedParseOptions) => AsyncGenerator<ParsedRow>>
> = {
  ndjson: parseNdjson,
  csv: parseCsv,
  json: parseJsonArray,
};

async function* withAbort(rows: AsyncGenerator<ParsedRow>, signal: AbortSignal | undefined): AsyncGenerator<ParsedRow> {
  for await (const row of rows) {
    signal?.throwIfAborted();
    yield row;
  }
}

/**
 * Parses an import file as a stream of rows, each either a record to
 * import or a rejection with its row number and reason.
 *
 * Row numbers are 1-based:
 * - NDJSON: the line number; blank lines are skipped but counted;
 * - CSV: the line on which the record starts, the header being line 1
 *   (or the first non-empty line); a quoted field with line breaks makes a
 *   record span several lines, and the next record's number counts them;
 * - JSON: the element's index in the top-level array.
 *
 * Memory stays flat whatever the file's size: one row (at most
 * `maxRowBytes`) is held at a time, a longer row is skipped while being
 * counted, and the input is pulled only as fast as rows are consumed (a
 * consumer that stops iterating closes the input). A leading UTF-8 byte
 * order mark is dropped. Invalid UTF-8 rejects exactly the row that holds
 * it; the parsers work on bytes, so a genuine U+FFFD in the file is an
 * ordinary character. Duplicates are not detected here: each record carries
 * `normalizedText` and `textHash` for the store to count them.
 *
 * File-level problems (see {@link ImportFileError}) are thrown from the
 * generator, after the rows that preceded them; so is the signal's reason
 * once `options.signal` is aborted.
 *
 * @throws TypeError (synchronously) for an unknown `format`.
 * @throws RangeError (synchronously) for a limit that is not a positive integer.
 */
export function parseImport(
  input: ImportInput,
  format: ImportFormat,
  options: ParseOptions = {},
): AsyncGenerator<ParsedRow> {
  if (!Object.hasOwn(PARSERS, format)) {
    throw new TypeError(`format must be one of ${Object.keys(PARSERS).join(', ')}, got ${JSON.stringify(format)}`);
  }
  const resolved = resolveParseOptions(options);
  return withAbort(PARSERS[format](readByteChunks(input, resolved.signal), resolved), resolved.signal);
}

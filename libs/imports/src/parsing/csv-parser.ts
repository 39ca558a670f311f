import { ByteBuffer } from './byte-buffer.js';
import { classifyName } from './field-names.js';
import { ImportFileError, type ParsedRow, type ResolvedParseOptions } from './import-record.js';
import { buildRecord, rejectedRow } from './record-builder.js';
import { decodeUtf8, describeInvalidByte, findInvalidUtf8 } from './utf8.js';

const COMMA = 0x2c;
const QUOTE = 0x22;
const CR = 0x0d;
const LF = 0x0a;

const enum State {
  FieldStart,
  Unquoted,
  Quoted,
  /** A quote inside a quoted field: either the first of an escaped pair or the closing quote. */
  QuoteInQuoted,
}

/** One record as split from the bytes, before any decoding. */
interface RawRecord {
  /** Line on which the record starts (1-based). */
  line: number;
  /** The raw bytes of each field, unquoted and unescaped; empty when `oversized`. */
  fields: Uint8Array[];
  /**
   * 0-based index of the first field whose closing quote is followed by
   * something other than a comma or a line break, or `null`. The record
   * still ends where the grammar says.
   */
  malformedField: number | null;
  /** The record's size in bytes, without its line break. */
  size: number;
  oversized: boolean;
}

/**
 * Splits CSV bytes into records, following RFC 4180: fields separated by
 * commas, records by line breaks, fields optionally enclosed in double
 * quotes, a quote inside a quoted field written as two quotes, line breaks
 * and commas allowed inside quoted fields.
 *
 * Working on bytes rather than decoded text lets each record carry its own
 * raw bytes, so invalid UTF-8 rejects exactly the record holding it (and a
 * genuine U+FFFD in the file is just three valid bytes), and lets an
 * oversized record be skipped without being held: only its size is counted.
 * None of the bytes that matter here (`,` `"` CR LF) can occur inside a
 * multi-byte UTF-8 sequence, so chunk boundaries can fall anywhere.
 *
 * Where the RFC is stricter than the files people have, the splitter is
 * lenient when the meaning is unambiguous and reports the record otherwise:
 * - line breaks may be CRLF, LF or a lone CR; each counts as one line;
 * - a quote inside an unquoted field (`12" vinyl`) is kept as a literal
 *   character;
 * - a character other than a comma or a line break after a closing quote
 *   (`"abc"x`) marks the record malformed; the rest of the field is read as
 *   unquoted so the splitter stays in step at the next comma or line break;
 * - empty lines between records are skipped (but counted);
 * - a quote that is never closed swallows the rest of the file, so the
 *   record cannot be delimited: {@link CsvSplitter.end} throws.
 */
class CsvSplitter {
  private state = State.FieldStart;
  private readonly field = new ByteBuffer();
  private fields: Uint8Array[] = [];
  private line = 1;
  private recordLine = 1;
  private quoteLine = 1;
  private size = 0;
  private hasContent = false;
  private malformedField: number | null = null;
  private previousWasCR = false;
  private fieldIndex = 0;

  constructor(private readonly maxBytes: number) {}

  *push(chunk: Uint8Array): Generator<RawRecord> {
    let i = 0;
    while (i < chunk.length) {
      const b = chunk[i];
      const afterCR = this.previousWasCR;
      this.previousWasCR = b === CR;
      if (b === CR || (b === LF && !afterCR)) this.line += 1;

      switch (this.state) {
        case State.FieldStart:
        case State.Unquoted:
        case State.QuoteInQuoted: {
          if (b === CR || b === LF) {
            // The LF of a CRLF that has already ended the record.
            if (b === LF && afterCR) {
              i += 1;
              continue;
            }
            const record = this.endRecord();
            if (record !== null) yield record;
            this.recordLine = this.line;
            i += 1;
            continue;
          }
          this.hasContent = true;
          if (b === COMMA) {
            this.endField();
            i += 1;
            continue;
          }
          if (this.state === State.FieldStart && b === QUOTE) {
            this.state = State.Quoted;
            this.quoteLine = this.line;
            this.count(1);
            i += 1;
            continue;
          }
          if (this.state === State.QuoteInQuoted) {
            if (b === QUOTE) {
              // RFC 4180 §2.7: `""` inside a quoted field is one quote.
              this.append(chunk, i, i + 1);
              this.state = State.Quoted;
              i += 1;
              continue;
            }
            this.malformedField ??= this.fieldIndex;
          }
          this.state = State.Unquoted;
          // Take the run up to the next comma or line break at once.
          let end = i + 1;
          while (end < chunk.length) {
            const c = chunk[end];
            if (c === COMMA || c === CR || c === LF) break;
            end += 1;
          }
          this.append(chunk, i, end);
          this.previousWasCR = false;
          i = end;
          continue;
        }
        case State.Quoted: {
          if (b === QUOTE) {
            this.state = State.QuoteInQuoted;
            this.count(1);
            i += 1;
            continue;
          }
          // Line breaks inside a quoted field are data; count lines as we go.
          let end = i + 1;
          if (b !== CR && b !== LF) {
            while (end < chunk.length) {
              const c = chunk[end];
              if (c === QUOTE || c === CR || c === LF) break;
              end += 1;
            }
            this.previousWasCR = false;
          }
          this.append(chunk, i, end);
          i = end;
          continue;
        }
      }
    }
  }

  /** The last record, when the input does not end with a line break. */
  *end(): Generator<RawRecord> {
    if (this.state === State.Quoted) {
      throw new ImportFileError(
        `malformed CSV: the quoted field opened on line ${this.quoteLine} is never closed, so the end of the row cannot be found`,
        this.recordLine,
      );
    }
    const record = this.endRecord();
    if (record !== null) yield record;
  }

  private get oversized(): boolean {
    return this.size > this.maxBytes;
  }

  private count(bytes: number): void {
    this.size += bytes;
    if (this.oversized) {
      this.field.clear();
      this.fields = [];
    }
  }

  private append(chunk: Uint8Array, start: number, end: number): void {
    this.count(end - start);
    if (!this.oversized) this.field.append(chunk, start, end);
  }

  private endField(): void {
    this.count(1);
    if (!this.oversized) this.fields.push(this.field.copy());
    this.field.clear();
    this.fieldIndex += 1;
    this.state = State.FieldStart;
  }

  private endRecord(): RawRecord | null {
    let record: RawRecord | null = null;
    if (this.hasContent) {
      if (!this.oversized) this.fields.push(this.field.copy());
      record = {
        line: this.recordLine,
        fields: this.fields,
        malformedField: this.malformedField,
        size: this.size,
        oversized: this.oversized,
      };
    }
    this.field.clear();
    this.fields = [];
    this.state = State.FieldStart;
    this.size = 0;
    this.hasContent = false;
    this.malformedField = null;
    this.fieldIndex = 0;
    return record;
  }
}

function closingQuoteProblem(column: string): string {
  return `malformed CSV: in ${column}, the closing quote is followed by a character other than a comma or a line break (RFC 4180 §2.7)`;
}

// Spaces and tabs around header names are almost always accidental.
function headerName(bytes: Uint8Array): string {
  return decodeUtf8(bytes).replace(/^[ \t]+|[ \t]+$/gu, '');
}

/** Reads and checks the header; every problem with it is a file-level error. */
function readHeader(record: RawRecord, maxBytes: number): string[] {
  const line = record.line;
  if (record.oversized)
    throw new ImportFileError(`the header row is ${record.size} bytes, over the limit of ${maxBytes} bytes`, line);
  if (record.malformedField !== null) {
    throw new ImportFileError(`header row: ${closingQuoteProblem(`column ${record.malformedField + 1}`)}`, line);
  }
  const names = record.fields.map((bytes, index) => {
    const invalid = findInvalidUtf8(bytes);
    if (invalid >= 0) {
      throw new ImportFileError(
        `invalid UTF-8 in header column ${index + 1} (${describeInvalidByte(bytes, invalid)} of the column name)`,
        line,
      );
    }
    return headerName(bytes);
  });
  const seen = new Map<string, number>();
  const fieldColumns = new Map<string, string>();
  names.forEach((name, index) => {
    const role = classifyName(name, 'csv');
    if (role.kind === 'invalid') {
      throw new ImportFileError(
        name.trim() === '' ? `header column ${index + 1} has an empty name` : `header: ${role.reason}`,
        line,
      );
    }
    const first = seen.get(name);
    if (first !== undefined) {
      throw new ImportFileError(`header: column '${name}' appears twice (columns ${first + 1} and ${index + 1})`, line);
    }
    seen.set(name, index);
    if (role.kind === 'field') {
      const other = fieldColumns.get(role.field);
      if (other !== undefined)
        throw new ImportFileError(`header: both '${other}' and '${name}' are given; keep one`, line);
      fieldColumns.set(role.field, name);
    }
  });
  if (!fieldColumns.has('text')) {
    const listed = names
      .slice(0, 10)
      .map((n) => `'${n}'`)
      .join(', ');
    throw new ImportFileError(
      `the header has no 'text' column (columns: ${listed}${names.length > 10 ? ', …' : ''})`,
      line,
    );
  }
  return names;
}

function toRow(record: RawRecord, header: readonly string[], options: ResolvedParseOptions): ParsedRow {
  const { line } = record;
  if (record.oversized)
    return rejectedRow(line, `row is ${record.size} bytes, over the limit of ${options.maxRowBytes} bytes`);
  if (record.fields.length !== header.length) {
    return rejectedRow(
      line,
      `malformed CSV: the row has ${record.fields.length} fields, the header has ${header.length}`,
    );
  }
  if (record.malformedField !== null)
    return rejectedRow(line, closingQuoteProblem(`column '${header[record.malformedField]}'`));
  const entries: (readonly [string, string])[] = [];
  for (let i = 0; i < header.length; i += 1) {
    const bytes = record.fields[i];
    const invalid = findInvalidUtf8(bytes);
    if (invalid >= 0) {
      return rejectedRow(
        line,
        `invalid UTF-8 in column '${header[i]}' (${describeInvalidByte(bytes, invalid)} of the field)`,
      );
    }
    entries.push([header[i], decodeUtf8(bytes)]);
  }
  return buildRecord(line, entries, 'csv', options);
}

/**
 * Parses CSV with a header row (see {@link CsvSplitter} for the grammar).
 *
 * The row number is the line on which the record starts, counting the
 * header's line as 1 and every line break (inside quoted fields too), so a
 * text editor opened at that line shows the start of the record.
 *
 * The header must name a `text` column; `external_id`, `source` and
 * `created_at` are recognised, every other column is metadata (string
 * values, empty cells kept as `""`). Header names are trimmed of spaces
 * and tabs. A header with a reserved, case-variant, empty or duplicated
 * name, or without `text`, fails the whole file with an
 * {@link ImportFileError} naming the column: every row would fail the same
 * way. An empty file fails too. A data row is rejected on its own when it
 * is over `maxRowBytes`, malformed, has a different number of fields from
 * the header, or holds invalid UTF-8 (the reason names the column).
 */
export async function* parseCsv(
  chunks: AsyncIterable<Uint8Array>,
  options: ResolvedParseOptions,
): AsyncGenerator<ParsedRow> {
  const splitter = new CsvSplitter(options.maxRowBytes);
  let header: string[] | null = null;
  for await (const chunk of chunks) {
    for (const record of splitter.push(chunk)) {
      if (header === null) header = readHeader(record, options.maxRowBytes);
      else yield toRow(record, header, options);
    }
  }
  for (const record of splitter.end()) {
    if (header === null) header = readHeader(record, options.maxRowBytes);
    else yield toRow(record, header, options);
  }
  if (header === null)
    throw new ImportFileError("the file is empty: a CSV import needs a header row with a 'text' column", 1);
}

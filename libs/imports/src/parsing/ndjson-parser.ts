import { ByteBuffer } from './byte-buffer.js';
import type { ParsedRow, ResolvedParseOptions } from './import-record.js';
import { parseJsonRow } from './json-row.js';
import { rejectedRow } from './record-builder.js';

const LF = 0x0a;
const CR = 0x0d;

/** One line of the input; `bytes` is `null` when the line was over the cap and not kept. */
interface RawLine {
  line: number;
  /** The line without its terminator (`\n` or `\r\n`); a view, valid until the splitter resumes. */
  bytes: Uint8Array | null;
  /** The line's full size in bytes, including a final `\r`. */
  size: number;
}

/**
 * Splits a byte stream on `\n` into numbered lines. Splitting on the raw
 * byte is safe in UTF-8, where 0x0A never occurs inside a multi-byte
 * sequence, even around invalid bytes. A line over `maxBytes` stops being
 * buffered at once; only its size is counted until its end.
 */
class LineSplitter {
  private readonly buffer = new ByteBuffer();
  private size = 0;
  private line = 0;

  constructor(private readonly maxBytes: number) {}

  *push(chunk: Uint8Array): Generator<RawLine> {
    let start = 0;
    for (;;) {
      const newline = chunk.indexOf(LF, start);
      this.take(chunk, start, newline < 0 ? chunk.length : newline);
      if (newline < 0) return;
      yield this.finish();
      start = newline + 1;
    }
  }

  /** The last line, when the input does not end with a newline. */
  *end(): Generator<RawLine> {
    if (this.size > 0) yield this.finish();
  }

  private take(chunk: Uint8Array, start: number, end: number): void {
    const count = end - start;
    if (this.size <= this.maxBytes) {
      if (this.size + count <= this.maxBytes) this.buffer.append(chunk, start, end);
      else this.buffer.clear();
    }
    this.size += count;
  }

  private finish(): RawLine {
    this.line += 1;
    let bytes: Uint8Array | null = null;
    if (this.size <= this.maxBytes) {
      const view = this.buffer.view();
      bytes = view.length > 0 && view[view.length - 1] === CR ? view.subarray(0, view.length - 1) : view;
    }
    const line: RawLine = { line: this.line, bytes, size: this.size };
    this.buffer.clear();
    this.size = 0;
    return line;
  }
}

function isBlank(bytes: Uint8Array): boolean {
  for (const b of bytes) {
    // JSON whitespace (RFC 8259 §2).
    if (b !== 0x20 && b !== 0x09 && b !== CR && b !== LF) return false;
  }
  return true;
}

/**
 * Parses NDJSON: one JSON object per line, lines ending in `\n` or `\r\n`.
 * The row number is the 1-based line number; blank lines (empty or only
 * JSON whitespace) are skipped but counted. Each line is checked on its own,
 * so a bad line (invalid UTF-8, malformed JSON, not an object, over
 * `maxRowBytes`) rejects that line only.
 */
export async function* parseNdjson(
  chunks: AsyncIterable<Uint8Array>,
  options: ResolvedParseOptions,
): AsyncGenerator<ParsedRow> {
  const splitter = new LineSplitter(options.maxRowBytes);
  const toRow = (line: RawLine): ParsedRow | null => {
    if (line.bytes === null) {
      return rejectedRow(line.line, `line is ${line.size} bytes, over the limit of ${options.maxRowBytes} bytes`);
    }
    if (isBlank(line.bytes)) return null;
    return parseJsonRow(line.line, line.bytes, 'line', 'ndjson', options);
  };
  for await (const chunk of chunks) {
    for (const line of splitter.push(chunk)) {
      const row = toRow(line);
      if (row !== null) yield row;
    }
  }
  for (const line of splitter.end()) {
    const row = toRow(line);
    if (row !== null) yield row;
  }
}

import { ByteBuffer } from './byte-buffer.js';
import { ImportFileError, type ParsedRow, type ResolvedParseOptions } from './import-record.js';
import { parseJsonRow } from './json-row.js';
import { rejectedRow } from './record-builder.js';

const OPEN_BRACKET = 0x5b;
const CLOSE_BRACKET = 0x5d;
const OPEN_BRACE = 0x7b;
const CLOSE_BRACE = 0x7d;
const COMMA = 0x2c;
const QUOTE = 0x22;
const BACKSLASH = 0x5c;

const enum State {
  /** Before the opening `[`. */
  Start,
  /** After `[`: an element or `]`. */
  First,
  /** After a `,`: an element. */
  Next,
  Element,
  /** After the closing `]`: only whitespace. */
  Done,
}

function isJsonWhitespace(b: number): boolean {
  // RFC 8259 §2.
  return b === 0x20 || b === 0x09 || b === 0x0a || b === 0x0d;
}

function describeByte(b: number): string {
  return b >= 0x21 && b <= 0x7e ? `'${String.fromCharCode(b)}'` : `byte 0x${b.toString(16).padStart(2, '0')}`;
}

/** One element of the top-level array, as raw bytes (`null` when over the cap and not kept). */
interface RawElement {
  index: number;
  bytes: Uint8Array | null;
  size: number;
}

/**
 * Splits a JSON text whose top level is an array into its elements' bytes,
 * without parsing them: it tracks only strings, escapes and the nesting
 * depth of brackets and braces, which is enough to find the commas and the
 * `]` at depth zero. Each element is then parsed on its own, so a malformed
 * element is reported by its index and the others still import. The bytes
 * it looks at are ASCII and never occur inside a multi-byte UTF-8 sequence,
 * so chunk boundaries can fall anywhere, including inside escapes.
 *
 * An element over `maxBytes` stops being buffered; the scan continues to its
 * end. Errors in the array's own structure (not an array, never closed, data
 * after it) cannot be confined to one element and throw
 * {@link ImportFileError}.
 */
class JsonArraySplitter {
  private state = State.Start;
  private readonly element = new ByteBuffer();
  private size = 0;
  private index = 0;
  private depth = 0;
  private inString = false;
  private escaped = false;

  constructor(private readonly maxBytes: number) {}

  *push(chunk: Uint8Array): Generator<RawElement> {
    let i = 0;
    while (i < chunk.length) {
      const b = chunk[i];
      switch (this.state) {
        case State.Start:
          if (b === OPEN_BRACKET) this.state = State.First;
          else if (!isJsonWhitespace(b)) {
            throw new ImportFileError(`the body is not a JSON array: it starts with ${describeByte(b)}, not '['`, 0);
          }
          i += 1;
          continue;
        case State.Done:
          if (!isJsonWhitespace(b))
            throw new ImportFileError(`unexpected ${describeByte(b)} after the closing ']' of the JSON array`, 0);
          i += 1;
          continue;
        case State.First:
        case State.Next:
          if (isJsonWhitespace(b)) {
            i += 1;
            continue;
          }
          if (this.state === State.First && b === CLOSE_BRACKET) {
            this.state = State.Done;
            i += 1;
            continue;
          }
          this.index += 1;
          this.state = State.Element;
          continue; // the same byte starts the element
        case State.Element: {
          if (this.inString) {
            let end = i;
            while (end < chunk.length) {
              const c = chunk[end];
              end += 1;
              if (this.escaped) this.escaped = false;
              else if (c === BACKSLASH) this.escaped = true;
              else if (c === QUOTE) {
                this.inString = false;
                break;
              }
            }
            this.append(chunk, i, end);
            i = end;
            continue;
          }
          if (this.depth === 0 && (b === COMMA || b === CLOSE_BRACKET)) {
            yield this.finish();
            this.state = b === COMMA ? State.Next : State.Done;
            i += 1;
            continue;
          }
          if (b === QUOTE) this.inString = true;
          else if (b === OPEN_BRACKET || b === OPEN_BRACE) this.depth += 1;
          // A stray closer at depth zero stays in the element, which then fails to parse.
          else if ((b === CLOSE_BRACKET || b === CLOSE_BRACE) && this.depth > 0) this.depth -= 1;
          this.append(chunk, i, i + 1);
          i += 1;
          continue;
        }
      }
    }
  }

  /** Checks that the array was closed. */
  end(): void {
    switch (this.state) {
      case State.Start:
        throw new ImportFileError('the body is empty: expected a JSON array', 0);
      case State.First:
      case State.Next:
        throw new ImportFileError(
          `the JSON array is not closed: the body ends before element ${this.index + 1}`,
          this.index + 1,
        );
      case State.Element:
        throw new ImportFileError(
          `the JSON array is not closed: the body ends inside element ${this.index}`,
          this.index,
        );
      case State.Done:
        return;
    }
  }

  private append(chunk: Uint8Array, start: number, end: number): void {
    const count = end - start;
    if (this.size <= this.maxBytes) {
      if (this.size + count <= this.maxBytes) this.element.append(chunk, start, end);
      else this.element.clear();
    }
    this.size += count;
  }

  private finish(): RawElement {
    const element: RawElement = {
      index: this.index,
      bytes: this.size <= this.maxBytes ? this.element.view() : null,
      size: this.size,
    };
    this.element.clear();
    this.size = 0;
    this.depth = 0;
    return element;
  }
}

function isEmpty(bytes: Uint8Array): boolean {
  return bytes.every(isJsonWhitespace);
}

/**
 * Parses a JSON array of objects. The row number is the element's 1-based
 * index in the array. An element that is malformed, not an object, over
 * `maxRowBytes` or holds invalid UTF-8 is rejected on its own; an empty
 * element (`[{…},,{…}]` or a trailing comma) is rejected as missing. A body
 * that is empty, is not an array, leaves the array open or has anything but
 * whitespace after it fails with {@link ImportFileError}; elements before
 * the failure have already been yielded.
 */
export async function* parseJsonArray(
  chunks: AsyncIterable<Uint8Array>,
  options: ResolvedParseOptions,
): AsyncGenerator<ParsedRow> {
  const splitter = new JsonArraySplitter(options.maxRowBytes);
  for await (const chunk of chunks) {
    for (const element of splitter.push(chunk)) {
      if (element.bytes === null) {
        yield rejectedRow(
          element.index,
          `element is ${element.size} bytes, over the limit of ${options.maxRowBytes} bytes`,
        );
      } else if (isEmpty(element.bytes)) {
        yield rejectedRow(element.index, 'missing array element (an extra comma)');
      } else {
        yield parseJsonRow(element.index, element.bytes, 'element', 'json', options);
      }
    }
  }
  splitter.end();
}

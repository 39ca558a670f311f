import { classifyName, type ItemField } from './field-names.js';
import type { ImportFormat, ParsedRow, ResolvedParseOptions } from './import-record.js';
import { parseIsoDateTime } from './iso-date.js';
import { hashNormalizedText, normalizeText } from './normalize-text.js';

/** Longest accepted `external_id` and `source`, in code points. */
export const MAX_SHORT_FIELD_LENGTH = 1000;

// In Unicode mode a well-formed surrogate pair is one code point, so this
// matches only unpaired surrogates, which no UTF-8 database column can hold.
const LONE_SURROGATE = /\p{Cs}/u;

/** The kind of a JSON value, with its article, for rejection reasons ("an array", "null"). */
export function describeType(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'an array';
  if (typeof value === 'object') return 'an object';
  return `a ${typeof value}`;
}

function codePointLength(text: string): number {
  let count = 0;
  for (let i = 0; i < text.length; i += 1) {
    const unit = text.charCodeAt(i);
    if (unit >= 0xd800 && unit <= 0xdbff && i + 1 < text.length) {
      const next = text.charCodeAt(i + 1);
      if (next >= 0xdc00 && next <= 0xdfff) i += 1;
    }
    count += 1;
  }
  return count;
}

/** Why a string cannot be stored as is, or `null` when it can. */
function unstorable(value: string, what: string): string | null {
  // PostgreSQL text and jsonb cannot hold U+0000.
  if (value.includes('\u0000')) return `${what} contains a NUL character (U+0000), which cannot be stored`;
  if (LONE_SURROGATE.test(value)) return `${what} contains an unpaired UTF-16 surrogate, which is not valid Unicode`;
  return null;
}

/** Deepest accepted nesting of metadata values (the row's metadata object is level 1). */
export const MAX_META_DEPTH = 32;

/**
 * The first problem among the keys and values of a metadata value, as a
 * reason: an unstorable string, or nesting so deep that serialising it
 * could exhaust the call stack.
 */
function unstorableInMeta(value: unknown, path: string, depth = 0): string | null {
  if (typeof value === 'string') return unstorable(value, `metadata '${path}'`);
  if (value === null || typeof value !== 'object') return null;
  if (depth >= MAX_META_DEPTH) return `metadata is nested more than ${MAX_META_DEPTH} levels deep`;
  const entries = Array.isArray(value) ? value.map((v, i) => [String(i), v] as const) : Object.entries(value);
  for (const [key, child] of entries) {
    const childPath = `${path}.${key}`;
    const bad = unstorable(key, `metadata key '${childPath}'`) ?? unstorableInMeta(child, childPath, depth + 1);
    if (bad !== null) return bad;
  }
  return null;
}

function setOwn(target: Record<string, unknown>, key: string, value: unknown): void {
  // Plain assignment of '__proto__' would replace the prototype instead of adding a key.
  Object.defineProperty(target, key, { value, enumerable: true, writable: true, configurable: true });
}

class RowRejected extends Error {}

function reject(reason: string): never {
  throw new RowRejected(reason);
}

function optionalShortString(value: unknown, name: string, allowNumber: boolean): string | null {
  if (value === undefined || value === null || value === '') return null;
  let result: string;
  if (typeof value === 'string') result = value;
  else if (allowNumber && typeof value === 'number') {
    // JSON numbers beyond 2^53 have already lost digits when parsed.
    if (!Number.isSafeInteger(value))
      reject(`'${name}' ${String(value)} is not an integer that can be read exactly; send it as a string`);
    result = String(value);
  } else {
    reject(`'${name}' must be a string${allowNumber ? ' or an integer' : ''}, got ${describeType(value)}`);
  }
  const bad = unstorable(result, `'${name}'`);
  if (bad !== null) reject(bad);
  const length = codePointLength(result);
  if (length > MAX_SHORT_FIELD_LENGTH) {
    reject(`'${name}' is ${length} characters long, over the limit of ${MAX_SHORT_FIELD_LENGTH}`);
  }
  return result;
}

function optionalDate(value: unknown, name: string): Date | null {
  if (value === undefined || value === null || value === '') return null;
  if (typeof value !== 'string') reject(`'${name}' must be an ISO 8601 date-time string, got ${describeType(value)}`);
  const date = parseIsoDateTime(value);
  if (date === null) reject(`'${name}' is not an ISO 8601 date or date-time: '${value.slice(0, 40)}'`);
  return date;
}

function checkedText(value: unknown, maxTextLength: number): string {
  if (value === undefined) reject("missing 'text'");
  if (typeof value !== 'string') reject(`'text' must be a string, got ${describeType(value)}`);
  const bad = unstorable(value, 'text');
  if (bad !== null) reject(bad);
  if (value.length > maxTextLength) {
    const length = codePointLength(value);
    if (length > maxTextLength) {
      reject(`text is ${length} characters long, over the limit of ${maxTextLength} (counted in Unicode code points)`);
    }
  }
  return value;
}

/**
 * Turns the named values of one row into a record, or a rejection naming
 * the first problem found.
 *
 * `entries` are the row's top-level keys (JSON, NDJSON) or its header
 * columns with their cells (CSV), in file order. Rules, in order:
 * - names are classified by {@link classifyName}; an invalid name rejects
 *   the row, and so does a field given under two spellings
 *   (`external_id` and `externalId`);
 * - `meta` (JSON, NDJSON) must be an object or `null`; its keys join the
 *   other metadata, and a key present both inside `meta` and at the top
 *   level rejects the row rather than one silently winning. Keys inside
 *   `meta` are not checked against reserved names: they are metadata by
 *   construction;
 * - `text` must be a string, within `maxTextLength` code points, and not
 *   empty after {@link normalizeText} (so whitespace-only or invisible-only
 *   texts are "empty text");
 * - `external_id` is a string or a safe integer (converted to its decimal
 *   string); `source` a string; both at most {@link MAX_SHORT_FIELD_LENGTH}
 *   code points; `created_at` an ISO 8601 string ({@link parseIsoDateTime}).
 *   For these three, absent, `null` and `""` all mean "not given";
 * - no string may contain U+0000 or an unpaired surrogate (JSON `\u`
 *   escapes can produce both), since the database cannot store them;
 * - the metadata, serialised as JSON, must fit in `maxMetaBytes` UTF-8 bytes
 *   and be nested at most {@link MAX_META_DEPTH} levels deep.
 */
export function buildRecord(
  row: number,
  entries: Iterable<readonly [string, unknown]>,
  format: ImportFormat,
  options: ResolvedParseOptions,
): ParsedRow {
  try {
    const fields = new Map<ItemField, { name: string; value: unknown }>();
    const meta: Record<string, unknown> = {};
    for (const [name, value] of entries) {
      const role = classifyName(name, format);
      if (role.kind === 'invalid') reject(role.reason);
      if (role.kind === 'meta') {
        setOwn(meta, name, value);
        continue;
      }
      const earlier = fields.get(role.field);
      if (earlier !== undefined) reject(`both '${earlier.name}' and '${name}' are given; keep one`);
      fields.set(role.field, { name, value });
    }

    const nested = fields.get('meta')?.value;
    if (nested !== undefined && nested !== null) {
      if (typeof nested !== 'object' || Array.isArray(nested))
        reject(`'meta' must be an object, got ${describeType(nested)}`);
      for (const [key, value] of Object.entries(nested)) {
        if (Object.hasOwn(meta, key)) reject(`'${key}' is given both as a key and inside 'meta'`);
        setOwn(meta, key, value);
      }
    }

    const text = checkedText(fields.get('text')?.value, options.maxTextLength);
    const normalizedText = normalizeText(text);
    if (normalizedText === '') reject('empty text');
    const externalId = optionalShortString(fields.get('externalId')?.value, fields.get('externalId')?.name ?? '', true);
    const source = optionalShortString(fields.get('source')?.value, 'source', false);
    const createdAt = optionalDate(fields.get('createdAt')?.value, fields.get('createdAt')?.name ?? '');

    const badMeta = unstorableInMeta(meta, 'meta');
    if (badMeta !== null) reject(badMeta);
    const metaBytes = Buffer.byteLength(JSON.stringify(meta), 'utf8');
    if (metaBytes > options.maxMetaBytes) {
      reject(`metadata is ${metaBytes} bytes as JSON, over the limit of ${options.maxMetaBytes}`);
    }

    return {
      ok: true,
      record: {
        row,
        text,
        externalId,
        source,
        createdAt,
        meta,
        normalizedText,
        textHash: hashNormalizedText(normalizedText),
      },
    };
  } catch (error) {
    if (error instanceof RowRejected) return { ok: false, rejected: { row, reason: error.message } };
    throw error;
  }
}

/** A rejection, for the format parsers. */
export function rejectedRow(row: number, reason: string): ParsedRow {
  return { ok: false, rejected: { row, reason } };
}

import type { ParsedRow, ResolvedParseOptions } from './import-record.js';
import { buildRecord, describeType, rejectedRow } from './record-builder.js';
import { decodeUtf8, describeInvalidByte, findInvalidUtf8 } from './utf8.js';

/**
 * Parses one JSON document (an NDJSON line, a JSON array element) into a
 * row; `where` names it in the invalid-UTF-8 reason ("line", "element").
 */
export function parseJsonRow(
  row: number,
  bytes: Uint8Array,
  where: string,
  format: 'ndjson' | 'json',
  options: ResolvedParseOptions,
): ParsedRow {
  const invalid = findInvalidUtf8(bytes);
  if (invalid >= 0) return rejectedRow(row, `invalid UTF-8 (${describeInvalidByte(bytes, invalid)} of the ${where})`);
  let value: unknown;
  try {
    value = JSON.parse(decodeUtf8(bytes));
  } catch (error) {
    if (error instanceof SyntaxError) return rejectedRow(row, `malformed JSON: ${error.message}`);
    throw error;
  }
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    return rejectedRow(row, `expected a JSON object, got ${describeType(value)}`);
  }
  return buildRecord(row, Object.entries(value), format, options);
}

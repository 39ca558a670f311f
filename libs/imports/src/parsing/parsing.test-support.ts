/**
 * Helpers shared by the parsers' unit tests (not part of the library; left
 * out of the build).
 */
import type { ImportFormat, ParsedRow, ParseOptions } from './import-record.js';
import { parseImport } from './parse-import.js';

export const encoder = new TextEncoder();

/** Text parts as UTF-8, byte arrays as they are, joined. */
export function concatBytes(parts: (string | number[])[]): Uint8Array {
  return Buffer.concat(parts.map((part) => (typeof part === 'string' ? encoder.encode(part) : Uint8Array.from(part))));
}

const bytesOf = (input: string | Uint8Array) => (typeof input === 'string' ? encoder.encode(input) : input);

/** Every row of one parse (a file-level error is thrown). */
export async function parseAll(
  input: string | Uint8Array,
  format: ImportFormat,
  options?: ParseOptions,
): Promise<ParsedRow[]> {
  const rows: ParsedRow[] = [];
  for await (const row of parseImport([bytesOf(input)], format, options)) rows.push(row);
  return rows;
}

/** The rows yielded before a failure, and the failure. */
export async function parseUntilError(
  input: string | Uint8Array,
  format: ImportFormat,
  options?: ParseOptions,
): Promise<{ rows: ParsedRow[]; error: unknown }> {
  const rows: ParsedRow[] = [];
  try {
    for await (const row of parseImport([bytesOf(input)], format, options)) rows.push(row);
  } catch (error) {
    return { rows, error };
  }
  return { rows, error: null };
}

/** `[row, text]` for records, `[row, reason]` prefixed with `!` for rejections. */
export function outline(rows: ParsedRow[]): [number, string][] {
  return rows.map((r) => (r.ok ? [r.record.row, r.record.text] : [r.rejected.row, `! ${r.rejected.reason}`]));
}

/** The message this runtime's JSON.parse gives for a text, so expectations do not hard-code it. */
export function jsonErrorOf(text: string): string {
  try {
    JSON.parse(text);
  } catch (error) {
    return (error as Error).message;
  }
  throw new Error(`${text} parses`);
}

import { RAW, SPREADSHEET_SAFE, type CsvOptions } from './csv.js';
import { InvalidInput } from '#errors';

/** How a CSV download was asked for: `?raw=1` for values exactly as stored, `?bom=1` for a leading byte order mark. */
export interface CsvRequest {
  options: CsvOptions;
  bom: boolean;
}

function flag(name: string, value: unknown): boolean {
  if (value === undefined || value === '') return false;
  if (value === '1' || value === 'true') return true;
  if (value === '0' || value === 'false') return false;
  throw new InvalidInput(`${name}: expected 1 or 0 (true or false), got ${JSON.stringify(value)}`);
}

/** Reads `raw` and `bom` from a CSV route's query; 400 for anything but 1/0/true/false, given at most once. */
export function csvRequest(query: { raw?: unknown; bom?: unknown }): CsvRequest {
  return { options: flag('raw', query.raw) ? RAW : SPREADSHEET_SAFE, bom: flag('bom', query.bom) };
}

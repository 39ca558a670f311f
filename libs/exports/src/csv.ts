/** What a CSV field holds: text, numbers and booleans as written, objects as JSON, nothing for null. */
export type CsvValue = string | number | boolean | bigint | object | null | undefined;

/**
 * One CSV field per RFC 4180 (section 2): a field holding a comma, a double
 * quote, CR or LF is enclosed in double quotes, with each double quote
 * doubled; empty for null and undefined; objects as JSON.
 */
export function csvField(value: CsvValue): string {
  if (value === null || value === undefined) return '';
  const s = typeof value === 'object' ? JSON.stringify(value) : String(value);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A CSV record per RFC 4180: fields separated by commas, the line ended by CRLF. */
export function csvLine(values: ReadonlyArray<CsvValue>): string {
  return `${values.map(csvField).join(',')}\r\n`;
}

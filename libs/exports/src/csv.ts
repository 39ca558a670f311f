/** What a CSV field holds: text, numbers and booleans as written, objects as JSON, nothing for null. */
export type CsvValue = string | number | boolean | bigint | object | null | undefined;

/** How a CSV export is written. */
export interface CsvOptions {
  /**
   * Neutralise text that a spreadsheet would run as a formula (the default). Off (`?raw=1`) for programs that read
   * the file and want every value exactly as stored.
   */
  neutralise: boolean;
}

export const SPREADSHEET_SAFE: CsvOptions = { neutralise: true };
export const RAW: CsvOptions = { neutralise: false };

/**
 * The characters that make a spreadsheet read a cell as a formula when they lead it: `=`, `+`, `-`, `@`, tab and
 * carriage return (OWASP, "CSV Injection", the list of characters no cell may begin with).
 */
const FORMULA_LEAD = /^[=+\-@\t\r]/;

/**
 * One CSV field per RFC 4180 (section 2): a field holding a comma, a double quote, CR or LF is enclosed in double
 * quotes, with each double quote doubled; empty for null and undefined; objects as JSON.
 *
 * Spreadsheet-safe (the default), per OWASP's CSV injection guidance: text that begins with a formula character gets
 * a leading apostrophe (`'`) and is quoted, so a spreadsheet shows it as text and never evaluates it; a field holding
 * a semicolon or a tab is quoted too, because a spreadsheet set to another separator would otherwise start a new cell
 * there, whose first character could again be a formula's. Numbers and booleans are written as they are: they are
 * the service's own figures, and a negative number must stay a number.
 */
export function csvField(value: CsvValue, options: CsvOptions = SPREADSHEET_SAFE): string {
  if (value === null || value === undefined) return '';
  let s = typeof value === 'object' ? JSON.stringify(value) : String(value);
  if (!options.neutralise || typeof value !== 'string') return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  const formula = FORMULA_LEAD.test(s);
  if (formula) s = `'${s}`;
  return formula || /[",\r\n;\t]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A CSV record per RFC 4180: fields separated by commas, the line ended by CRLF. */
export function csvLine(values: ReadonlyArray<CsvValue>, options: CsvOptions = SPREADSHEET_SAFE): string {
  return `${values.map((v) => csvField(v, options)).join(',')}\r\n`;
}

/** The UTF-8 byte order mark, which tells a spreadsheet that a CSV file is UTF-8 (`?bom=1`). */
export const UTF8_BOM = '\uFEFF';

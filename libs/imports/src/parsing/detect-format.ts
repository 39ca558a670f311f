import type { ImportFormat } from './import-record.js';

const FORMAT_BY_MEDIA_TYPE: ReadonlyMap<string, ImportFormat> = new Map<string, ImportFormat>([
  ['application/x-ndjson', 'ndjson'],
  ['application/ndjson', 'ndjson'],
  ['application/jsonl', 'ndjson'],
  ['application/x-jsonlines', 'ndjson'],
  ['text/csv', 'csv'],
  ['application/csv', 'csv'],
  ['text/x-csv', 'csv'],
  ['application/json', 'json'],
]);

const FORMAT_BY_EXTENSION: ReadonlyMap<string, ImportFormat> = new Map<string, ImportFormat>([
  ['ndjson', 'ndjson'],
  ['jsonl', 'ndjson'],
  ['csv', 'csv'],
  ['json', 'json'],
]);

// Charsets whose bytes are valid UTF-8 as they are.
const UTF8_CHARSETS: ReadonlySet<string> = new Set(['utf-8', 'utf8', 'us-ascii']);

interface MediaType {
  type: string;
  charset: string | null;
}

function parseMediaType(contentType: string): MediaType {
  const [essence, ...parameters] = contentType.split(';');
  let charset: string | null = null;
  for (const parameter of parameters) {
    const eq = parameter.indexOf('=');
    if (eq < 0) continue;
    if (parameter.slice(0, eq).trim().toLowerCase() === 'charset') {
      charset = parameter
        .slice(eq + 1)
        .trim()
        .replace(/^"(.*)"$/u, '$1')
        .toLowerCase();
    }
  }
  return { type: essence.trim().toLowerCase(), charset };
}

function formatFromFileName(fileName: string | undefined): ImportFormat | null {
  if (fileName === undefined) return null;
  const base = fileName.split(/[\\/]/u).pop() ?? '';
  const dot = base.lastIndexOf('.');
  if (dot <= 0) return null;
  return FORMAT_BY_EXTENSION.get(base.slice(dot + 1).toLowerCase()) ?? null;
}

/**
 * The import format of a request body or an uploaded file, or `null` when it
 * cannot be told or is not accepted (the API answers 415).
 *
 * - A known media type decides, whatever the file name says; parameters
 *   such as `; charset=utf-8` are ignored, and media types are
 *   case-insensitive (RFC 9110 §8.3.1). NDJSON is recognised as
 *   `application/x-ndjson`, `application/ndjson`, `application/jsonl` and
 *   `application/x-jsonlines`; CSV as `text/csv`, `application/csv` and
 *   `text/x-csv`; JSON as `application/json`.
 * - A missing or other media type (clients send `application/octet-stream`
 *   or `text/plain` for any file, and some browsers label `.csv` uploads
 *   `application/vnd.ms-excel`) falls back to the file name's extension: `.ndjson` and `.jsonl`, `.csv`, `.json`
 *   (case-insensitive).
 * - A charset other than UTF-8 (or its subset US-ASCII) gives `null`: only
 *   UTF-8 is read, and bytes in another encoding would be reported row by
 *   row as invalid UTF-8 rather than once.
 */
export function detectImportFormat(contentType: string | undefined, fileName?: string): ImportFormat | null {
  if (contentType !== undefined && contentType.trim() !== '') {
    const { type, charset } = parseMediaType(contentType);
    if (charset !== null && !UTF8_CHARSETS.has(charset)) return null;
    const known = FORMAT_BY_MEDIA_TYPE.get(type);
    if (known !== undefined) return known;
  }
  return formatFromFileName(fileName);
}

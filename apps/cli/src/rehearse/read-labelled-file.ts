import { createReadStream } from 'node:fs';
import { open } from 'node:fs/promises';
import {
  detectImportFormat,
  ImportFileError,
  ITEM_FIELD_SPELLINGS,
  parseImport,
  type ImportFormat,
  type RejectedRow,
} from '#imports';
import { UsageError } from '../cli-command.js';

export interface LabelledLine {
  text: string;
  label: string;
}

/** The input cannot be used as a whole; the message says why (and where, for a file-level problem). */
export class InputError extends Error {}

/** What was read: the usable rows, and what was left out with the reason, as an import reports it. */
export interface LabelledFile {
  items: LabelledLine[];
  format: ImportFormat;
  rows: number;
  rejected: RejectedRow[];
  duplicates: number;
}

/**
 * Reads a labelled file through the import parser, so that a rehearsal sees the rows an import of the same file
 * would take: NDJSON, CSV or a JSON array; a `text` field per row under the import's rules (length, encoding, empty
 * text); each rejected row reported with its number and reason; duplicates (same external id, or same normalised
 * text) counted and read once. The label is a metadata field of the row (`labelField`); a row without one is
 * rejected too. Streams the file: memory holds the kept rows, never the file.
 */
export async function readLabelledFile(
  path: string,
  labelField: string,
  format: ImportFormat | undefined,
): Promise<LabelledFile> {
  if (Object.hasOwn(ITEM_FIELD_SPELLINGS, labelField))
    throw new UsageError(`--label-field ${JSON.stringify(labelField)} names an item field; name the category column`);
  const kind = format ?? detectImportFormat(undefined, path);
  if (kind === null)
    throw new UsageError(`cannot tell the format of ${path} from its extension; add --format ndjson, csv or json`);
  try {
    await (await open(path, 'r')).close();
  } catch (error) {
    throw new InputError(`cannot read ${path}: ${(error as Error).message}`);
  }
  const items: LabelledLine[] = [];
  const rejected: RejectedRow[] = [];
  const seenText = new Set<string>();
  const seenId = new Set<string>();
  let rows = 0;
  let duplicates = 0;
  try {
    for await (const parsed of parseImport(createReadStream(path), kind)) {
      rows++;
      if (!parsed.ok) {
        rejected.push(parsed.rejected);
        continue;
      }
      const { record } = parsed;
      const label = record.meta[labelField];
      if (label === undefined || label === null || label === '') {
        rejected.push({ row: record.row, reason: `missing label '${labelField}'` });
        continue;
      }
      if (typeof label !== 'string' && typeof label !== 'number' && typeof label !== 'boolean') {
        const got = Array.isArray(label) ? 'an array' : 'an object';
        rejected.push({ row: record.row, reason: `label '${labelField}' must be a string or a number, got ${got}` });
        continue;
      }
      if (seenText.has(record.textHash) || (record.externalId !== null && seenId.has(record.externalId))) {
        duplicates++;
        continue;
      }
      seenText.add(record.textHash);
      if (record.externalId !== null) seenId.add(record.externalId);
      items.push({ text: record.text, label: String(label) });
    }
  } catch (error) {
    if (error instanceof ImportFileError)
      throw new InputError(`${path}${error.row > 0 ? ` row ${error.row}` : ''}: ${error.message}`);
    throw error;
  }
  return { items, format: kind, rows, rejected, duplicates };
}

/** Refuses a file a rehearsal cannot use: no usable row, or a single class. */
export function checkUsable(input: LabelledFile, path: string, labelField: string): void {
  const { items, rows, rejected } = input;
  if (items.length === 0)
    throw new InputError(`${path} holds no usable rows (${rows} read, ${rejected.length} rejected)`);
  const classes = new Set(items.map((r) => r.label));
  if (classes.size < 2) {
    throw new InputError(
      `label '${labelField}' has only one class (${JSON.stringify([...classes][0])}); a rehearsal needs at least two`,
    );
  }
}

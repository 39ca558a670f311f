import type { ImportFormat } from './import-record.js';

/** The item fields a row can set; every other column or key is metadata. */
export type ItemField = 'text' | 'externalId' | 'source' | 'createdAt' | 'meta';

/**
 * The accepted spellings of the item fields, in every format. `meta` (an
 * object merged into the metadata) exists only in JSON and NDJSON; in CSV a
 * `meta` column is an ordinary metadata column.
 */
export const ITEM_FIELD_SPELLINGS: Readonly<Record<string, ItemField>> = Object.freeze({
  text: 'text',
  external_id: 'externalId',
  externalId: 'externalId',
  source: 'source',
  created_at: 'createdAt',
  createdAt: 'createdAt',
  meta: 'meta',
});

/**
 * Names the service sets itself. A row may not use them, in any spelling
 * that differs only in case, `_`, `-` or spaces (`Desk-ID`, `deskId`): the
 * author almost certainly meant to set that field, and silently filing the
 * value as metadata would hide the mistake.
 */
export const RESERVED_FIELD_NAMES: readonly string[] = Object.freeze([
  'id',
  'desk_id',
  'item_id',
  'priority',
  'state',
  'draw',
  'lease',
  'verdict',
  'model_version',
  'normalized_text',
  'text_hash',
]);

/** What a column or key name means. */
export type NameRole = { kind: 'field'; field: ItemField } | { kind: 'meta' } | { kind: 'invalid'; reason: string };

function signature(name: string): string {
  return name.toLowerCase().replace(/[\s_-]+/gu, '');
}

const RESERVED_BY_SIGNATURE = new Map(RESERVED_FIELD_NAMES.map((name) => [signature(name), name]));

const FIELD_BY_SIGNATURE = new Map<string, string>([
  ['text', 'text'],
  ['externalid', 'external_id'],
  ['source', 'source'],
  ['createdat', 'created_at'],
  ['meta', 'meta'],
]);

/**
 * The role of a column (CSV) or top-level key (JSON, NDJSON) name.
 *
 * Exact spellings from {@link ITEM_FIELD_SPELLINGS} set a field. A name that
 * differs from one of them only in case or punctuation (`Text`, `SOURCE`,
 * `external-id`) is invalid rather than metadata, for the same reason as the
 * {@link RESERVED_FIELD_NAMES}. Empty names are invalid. Everything else is
 * metadata, kept under its name as given.
 */
export function classifyName(name: string, format: ImportFormat): NameRole {
  const noun = format === 'csv' ? 'column' : 'key';
  const sig = signature(name);
  if (sig === 'meta' && format === 'csv') return { kind: 'meta' };
  const exact = Object.hasOwn(ITEM_FIELD_SPELLINGS, name) ? ITEM_FIELD_SPELLINGS[name] : undefined;
  if (exact !== undefined) return { kind: 'field', field: exact };
  if (name.trim() === '') return { kind: 'invalid', reason: `a ${noun} has an empty name` };
  const near = FIELD_BY_SIGNATURE.get(sig);
  if (near !== undefined) {
    return {
      kind: 'invalid',
      reason: `${noun} '${name}' differs from the recognised ${noun} '${near}' only in case or punctuation; rename it to '${near}'`,
    };
  }
  const reserved = RESERVED_BY_SIGNATURE.get(sig);
  if (reserved !== undefined) {
    return {
      kind: 'invalid',
      reason: `${noun} '${name}' is reserved (the service sets '${reserved}' itself); rename it`,
    };
  }
  return { kind: 'meta' };
}

/**
 * Streaming parsers for item imports (NDJSON, CSV, JSON arrays): pure
 * functions over byte streams, with no framework, database or queue.
 */
export { detectImportFormat } from './detect-format.js';
export { ITEM_FIELD_SPELLINGS, RESERVED_FIELD_NAMES } from './field-names.js';
export {
  DEFAULT_MAX_META_BYTES,
  DEFAULT_MAX_TEXT_LENGTH,
  ImportFileError,
  type ImportFormat,
  type ImportRecord,
  type ParsedRow,
  type ParseOptions,
  type RejectedRow,
} from './import-record.js';
export type { ImportInput } from './byte-source.js';
export { hashNormalizedText, normalizeText } from './normalize-text.js';
export { parseImport } from './parse-import.js';
export { MAX_META_DEPTH, MAX_SHORT_FIELD_LENGTH } from './record-builder.js';
export { classifyName } from './field-names.js';
export { parseIsoDateTime } from './iso-date.js';

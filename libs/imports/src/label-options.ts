import { createReadStream } from 'node:fs';
import { classifyName, ImportFileError, parseImport, type ImportFormat } from './parsing/index.js';

/** Where an archive's labels go: `archive` trains and never calibrates; `random` calibrates (a stated uniform sample). */
export const LABEL_DRAWS = ['archive', 'random'] as const;
export type LabelDraw = (typeof LABEL_DRAWS)[number];

/** The label options of an import as the client sent them (query parameters or form fields), not yet checked. */
export interface LabelOptionsInput {
  labelField?: string;
  labelDraw?: string;
  uniformSample?: string;
}

/** Checked label options: the column or key that holds a label, the draw its verdicts get, the uploader's statement. */
export interface LabelOptions {
  field: string;
  draw: LabelDraw;
  /** The uploader stated the archive is a uniform random sample of the same stream (required for `random`). */
  uniformSample: boolean;
}

/** A label option the request got wrong: the API answers 400 with the message. */
export class LabelOptionsError extends Error {}

const NAMES = ['labelField', 'labelDraw', 'uniformSample'] as const;

/**
 * Merges the query parameters with the multipart form's fields (either may carry an option; both may if they agree)
 * and checks them. `format` is the file's, when known: it decides whether the name is an item field (`meta` is one
 * in JSON, a plain column in CSV).
 *
 * @returns `null` when the import names no label column.
 * @throws LabelOptionsError naming the option and what is wrong with it.
 */
export function resolveLabelOptions(
  query: LabelOptionsInput,
  fields: LabelOptionsInput = {},
  format?: ImportFormat,
): LabelOptions | null {
  const merged: LabelOptionsInput = {};
  for (const name of NAMES) {
    const a: unknown = query[name];
    const b: unknown = fields[name];
    for (const v of [a, b])
      if (v !== undefined && typeof v !== 'string') throw new LabelOptionsError(`${name} is given more than once`);
    if (a !== undefined && b !== undefined && a !== b)
      throw new LabelOptionsError(
        `${name} is given twice with different values (${JSON.stringify(a)} as a query parameter, ${JSON.stringify(b)} in the form)`,
      );
    const value = (a ?? b) as string | undefined;
    if (value !== undefined) merged[name] = value;
  }
  const field = merged.labelField?.trim();
  if (field === undefined || field === '') {
    if (merged.labelField !== undefined) throw new LabelOptionsError('labelField is empty: name the label column');
    for (const name of ['labelDraw', 'uniformSample'] as const)
      if (merged[name] !== undefined) throw new LabelOptionsError(`${name} applies only with labelField`);
    return null;
  }
  if (field.length > 100) throw new LabelOptionsError('labelField is longer than 100 characters');
  const role = classifyName(field, format ?? 'ndjson');
  if (role.kind === 'field')
    throw new LabelOptionsError(
      `labelField '${field}' is an item field (${role.field}), not a label column: name the column that holds the labels`,
    );
  if (role.kind === 'invalid') throw new LabelOptionsError(`labelField: ${role.reason}`);
  const draw = merged.labelDraw ?? 'archive';
  if (!(LABEL_DRAWS as readonly string[]).includes(draw))
    throw new LabelOptionsError(`labelDraw must be archive or random, got ${JSON.stringify(draw)}`);
  const stated = merged.uniformSample;
  if (stated !== undefined && stated !== 'true' && stated !== 'false')
    throw new LabelOptionsError(`uniformSample must be true or false, got ${JSON.stringify(stated)}`);
  const uniformSample = stated === 'true';
  if (draw === 'random' && !uniformSample)
    throw new LabelOptionsError(
      'labelDraw=random needs uniformSample=true: random labels calibrate the prediction sets, which is sound only ' +
        'when the archive is a uniform random sample of the same stream; otherwise import with labelDraw=archive ' +
        '(the labels train and never calibrate)',
    );
  if (uniformSample && draw !== 'random')
    throw new LabelOptionsError('uniformSample=true applies only with labelDraw=random');
  return { field, draw: draw as LabelDraw, uniformSample };
}

/**
 * Whether a stored import file has the label column: a CSV file's first good row shows its columns; in NDJSON and
 * JSON, any row that has the key will do (the scan stops at the first). `names` are the first good row's metadata
 * names, for the message when it has none. A file broken as a whole answers `null`: the import job reports that.
 */
export async function findLabelField(
  path: string,
  format: ImportFormat,
  field: string,
  maxTextLength: number,
): Promise<{ found: boolean; names: string[] } | null> {
  let names: string[] | null = null;
  try {
    for await (const row of parseImport(createReadStream(path, { highWaterMark: 256 * 1024 }), format, {
      maxTextLength,
    })) {
      if (!row.ok) continue;
      if (Object.hasOwn(row.record.meta, field)) return { found: true, names: [] };
      names ??= Object.keys(row.record.meta);
      if (format === 'csv') break;
    }
  } catch (e) {
    if (e instanceof ImportFileError) return null;
    throw e;
  }
  return { found: false, names: names ?? [] };
}

/**
 * The label of one row, taken out of its metadata (the verdict holds it; the item keeps the rest). An absent, null or
 * blank label leaves the row an open item.
 *
 * @returns the category, `null` for no label, or a rejection reason naming the row's value and the desk's categories.
 */
export function takeLabel(
  meta: Record<string, unknown>,
  field: string,
  categories: readonly string[],
): { category: string | null } | { reason: string } {
  if (!Object.hasOwn(meta, field)) return { category: null };
  const value = meta[field];
  Reflect.deleteProperty(meta, field);
  if (value === null) return { category: null };
  if (typeof value !== 'string')
    return {
      reason: `label '${field}' must be a category name, got ${Array.isArray(value) ? 'a list' : typeof value}`,
    };
  const name = value.trim();
  if (name === '') return { category: null };
  if (!categories.includes(name))
    return {
      reason: `label '${field}' is ${JSON.stringify(name)}, which is not a category of this desk (${categories.join(', ')})`,
    };
  return { category: name };
}

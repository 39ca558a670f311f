import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';

export interface LabelledLine {
  text: string;
  label: string;
}

/** A line of the input that cannot be used; the message names the line. */
export class InputError extends Error {}

/**
 * Streams a JSON-lines file line by line (so large files never sit in memory
 * as one string), keeping the text and label fields of each object. Blank
 * lines are skipped; the first bad line stops the read with its number and
 * the reason.
 */
export async function readLabelledJsonl(path: string, textField: string, labelField: string): Promise<LabelledLine[]> {
  const stream = createReadStream(path, { encoding: 'utf8' });
  const opened = new Promise<void>((resolve, reject) => {
    stream.once('open', () => resolve());
    stream.once('error', (error) => reject(new InputError(`cannot read ${path}: ${error.message}`)));
  });
  await opened;
  const lines = createInterface({ input: stream, crlfDelay: Infinity });
  const out: LabelledLine[] = [];
  let n = 0;
  for await (const line of lines) {
    n++;
    if (line.trim() === '') continue;
    let row: unknown;
    try {
      row = JSON.parse(line);
    } catch (error) {
      throw new InputError(`line ${n}: not valid JSON (${(error as Error).message})`);
    }
    if (row === null || typeof row !== 'object' || Array.isArray(row))
      throw new InputError(`line ${n}: expected a JSON object`);
    const record = row as Record<string, unknown>;
    const text = record[textField];
    if (text === undefined) throw new InputError(`line ${n}: text field "${textField}" is missing`);
    if (typeof text !== 'string')
      throw new InputError(`line ${n}: text field "${textField}" must be a string, got ${typeof text}`);
    const label = record[labelField];
    if (label === undefined || label === null || label === '')
      throw new InputError(`line ${n}: label field "${labelField}" is missing`);
    if (typeof label !== 'string' && typeof label !== 'number' && typeof label !== 'boolean') {
      throw new InputError(
        `line ${n}: label field "${labelField}" must be a string, number or boolean, got ${typeof label}`,
      );
    }
    out.push({ text, label: String(label) });
  }
  if (out.length === 0) throw new InputError(`${path} holds no rows`);
  const classes = new Set(out.map((r) => r.label));
  if (classes.size < 2) {
    throw new InputError(
      `label field "${labelField}" has only one class (${JSON.stringify([...classes][0])}); a rehearsal needs at least two`,
    );
  }
  return out;
}

import { createWriteStream } from 'node:fs';
import { Transform, type Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import busboy from 'busboy';
import { detectImportFormat, type ImportFormat } from './parsing/index.js';

export interface ReceivedUpload {
  format: ImportFormat;
  fileName: string | null;
  bytes: number;
  /** The multipart form's text fields (first value of each name); empty for a raw body. */
  fields: Record<string, string>;
}

export class UploadError extends Error {
  constructor(
    message: string,
    readonly status: 400 | 415 = 400,
  ) {
    super(message);
  }
}

/** Counts the bytes going through, and reports them as they pass. */
function counter(onBytes: (n: number) => void): Transform {
  let total = 0;
  return new Transform({
    transform(chunk: Buffer, _enc, done) {
      total += chunk.length;
      onBytes(total);
      done(null, chunk);
    },
  });
}

/**
 * Streams a request body to a file, without holding it in memory: either the
 * raw body (format from Content-Type) or the first file of a multipart form
 * (format from the part's type or file name) with the form's text fields. `onFormat` is called before any
 * byte is written, so the caller can record the import first.
 */
export async function receiveUpload(
  req: Readable & { headers: Record<string, string | string[] | undefined> },
  path: string,
  onFormat: (format: ImportFormat, fileName: string | null) => Promise<void>,
  onBytes: (n: number) => void = () => undefined,
): Promise<ReceivedUpload> {
  const contentType = String(req.headers['content-type'] ?? '');
  if (!/^multipart\/form-data/i.test(contentType)) {
    const format = detectImportFormat(contentType);
    if (!format)
      throw new UploadError(
        `unsupported Content-Type ${JSON.stringify(contentType || '(none)')}: send application/x-ndjson, text/csv, application/json, or a multipart/form-data file`,
        415,
      );
    await onFormat(format, null);
    let bytes = 0;
    await pipeline(
      req,
      counter((n) => {
        bytes = n;
        onBytes(n);
      }),
      createWriteStream(path),
    );
    return { format, fileName: null, bytes, fields: {} };
  }

  return new Promise<ReceivedUpload>((resolve, reject) => {
    let bb: busboy.Busboy;
    try {
      bb = busboy({ headers: req.headers, limits: { files: 1 } });
    } catch (e) {
      reject(new UploadError(`malformed multipart request: ${(e as Error).message}`));
      return;
    }
    let started = false;
    let done: Promise<ReceivedUpload> | null = null;
    // Fields may come before or after the file; every one is in by 'close'.
    const fields: Record<string, string> = {};
    bb.on('field', (name, value) => {
      if (!Object.hasOwn(fields, name)) fields[name] = value;
    });
    bb.on('file', (_field, file, info) => {
      if (started) {
        file.resume();
        return;
      }
      started = true;
      const format = detectImportFormat(info.mimeType, info.filename);
      if (!format) {
        file.resume();
        reject(
          new UploadError(
            `cannot tell the format of ${JSON.stringify(info.filename ?? 'the file')} (type ${info.mimeType}): use .ndjson/.jsonl, .csv or .json`,
            415,
          ),
        );
        return;
      }
      done = (async () => {
        await onFormat(format, info.filename ?? null);
        let bytes = 0;
        await pipeline(
          file,
          counter((n) => {
            bytes = n;
            onBytes(n);
          }),
          createWriteStream(path),
        );
        return { format, fileName: info.filename ?? null, bytes, fields };
      })();
      done.catch(reject);
    });
    bb.on('error', (e) => reject(new UploadError(`malformed multipart request: ${(e as Error).message}`)));
    bb.on('close', () => {
      if (!done) reject(new UploadError('the multipart form holds no file'));
      else done.then(resolve, reject);
    });
    req.pipe(bb);
  });
}

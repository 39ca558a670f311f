/**
 * What {@link parseImport} reads: any async iterable of byte chunks, such as
 * an HTTP request, a multipart file stream or `fs.createReadStream`, or an
 * array (any iterable) of byte chunks already in memory. A Node stream must
 * not have an encoding set: string chunks are accepted but have already
 * been decoded, so invalid UTF-8 in them can no longer be detected.
 */
export type ImportInput = AsyncIterable<Uint8Array | string> | Iterable<Uint8Array> | NodeJS.ReadableStream;

const BOM = [0xef, 0xbb, 0xbf] as const;

function isBomPrefix(bytes: Uint8Array): boolean {
  for (let i = 0; i < bytes.length && i < BOM.length; i += 1) {
    if (bytes[i] !== BOM[i]) return false;
  }
  return true;
}

function toBytes(chunk: Uint8Array | string): Uint8Array {
  return typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk;
}

function concat(a: Uint8Array, b: Uint8Array): Uint8Array {
  const out = new Uint8Array(a.length + b.length);
  out.set(a, 0);
  out.set(b, a.length);
  return out;
}

/**
 * The input's bytes, chunk by chunk, without a leading UTF-8 byte order mark
 * (which may itself be split across chunks) and without empty chunks.
 *
 * Each chunk is pulled only when the consumer asks for the next one, so a
 * stream is read no faster than rows are consumed. Ending the iteration early
 * closes the input (a Node stream is destroyed by its iterator's `return`).
 *
 * @throws the signal's reason once `signal` is aborted.
 */
export async function* readByteChunks(input: ImportInput, signal: AbortSignal | undefined): AsyncGenerator<Uint8Array> {
  let head: Uint8Array | null = new Uint8Array(0);
  signal?.throwIfAborted();
  for await (const raw of input as AsyncIterable<Uint8Array | string> | Iterable<Uint8Array>) {
    signal?.throwIfAborted();
    let chunk = toBytes(raw);
    if (head !== null) {
      const joined: Uint8Array = concat(head, chunk);
      if (joined.length < BOM.length && isBomPrefix(joined)) {
        head = joined;
        continue;
      }
      head = null;
      chunk = isBomPrefix(joined) ? joined.subarray(BOM.length) : joined;
    }
    if (chunk.length > 0) yield chunk;
    signal?.throwIfAborted();
  }
  // A file shorter than a BOM that happens to look like its start.
  if (head !== null && head.length > 0) yield head;
}

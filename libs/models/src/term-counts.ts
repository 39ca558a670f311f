import type { FeaturizerOptions, SparseVector } from '#learning';

/** First byte of every encoded term-count row: the format version. */
const FORMAT_VERSION = 1;
/** Every stored number (term count, bucket index, count of a term) is below this: 4 varint bytes at most. */
const MAX_VALUE = 2 ** 28;

/**
 * Names the featuriser settings a cached row was counted with (hash size,
 * word n-grams, character n-grams), e.g. `h18w2c3-5`. Cached counts serve a
 * model only when its featuriser has the same key; otherwise the text is
 * tokenised again.
 */
export function featurizerKey(options: Readonly<Required<FeaturizerOptions>>): string {
  const chars = options.charNgrams === null ? 'c0' : `c${options.charNgrams[0]}-${options.charNgrams[1]}`;
  return `h${options.hashBits}w${options.maxWordNgram}${chars}`;
}

/**
 * Encodes hashed term counts (indices strictly ascending, whole counts ≥ 1)
 * compactly: a format byte, the number of terms, then for each term the gap
 * from the previous index and the count, all as unsigned LEB128 varints
 * (each below 2^28).
 * A short post of a few hundred n-grams takes a few hundred bytes.
 */
export function encodeTermCounts(counts: SparseVector): Buffer {
  const { indices, values } = counts;
  const n = indices.length;
  if (n >= MAX_VALUE) throw new RangeError(`counts: ${n} terms is too many`);
  const out = Buffer.allocUnsafe(1 + 4 + n * 8);
  let at = 0;
  out[at++] = FORMAT_VERSION;
  const put = (x: number) => {
    while (x >= 0x80) {
      out[at++] = (x & 0x7f) | 0x80;
      x >>>= 7;
    }
    out[at++] = x;
  };
  put(n);
  let prev = -1;
  for (let i = 0; i < n; i++) {
    const index = indices[i];
    const count = values[i];
    if (!(index > prev) || !Number.isInteger(index) || index >= MAX_VALUE)
      throw new RangeError(`counts.indices[${i}] = ${index}: expected whole numbers below 2^28, strictly ascending`);
    if (!Number.isInteger(count) || count < 1 || count >= MAX_VALUE)
      throw new RangeError(`counts.values[${i}] = ${count}: expected a whole count from 1 to 2^28 − 1`);
    put(index - prev - 1);
    put(count);
    prev = index;
  }
  return out.subarray(0, at);
}

/** Read position of {@link varint} (decoding is synchronous, so one position serves every call). */
let cursor = 0;

/** The unsigned LEB128 varint at {@link cursor} (below 2^28, so shifts stay exact); moves the cursor past it. */
function varint(bytes: Uint8Array, end: number): number {
  if (cursor >= end) throw new RangeError('term counts: truncated');
  let b = bytes[cursor++];
  let x = b & 0x7f;
  for (let shift = 7; b >= 0x80; shift += 7) {
    if (cursor >= end) throw new RangeError('term counts: truncated');
    b = bytes[cursor++]!;
    x |= (b & 0x7f) << shift;
  }
  return x;
}

/** Decodes a row written by {@link encodeTermCounts}. */
export function decodeTermCounts(bytes: Uint8Array): SparseVector {
  const end = bytes.length;
  if (end < 2 || bytes[0] !== FORMAT_VERSION)
    throw new RangeError(`term counts: unknown format ${bytes[0]} (length ${end})`);
  cursor = 1;
  const n = varint(bytes, end);
  if (n > (end - cursor) / 2) throw new RangeError('term counts: truncated');
  const indices = new Int32Array(n);
  const values = new Float64Array(n);
  let prev = -1;
  for (let i = 0; i < n; i++) {
    prev += varint(bytes, end) + 1;
    indices[i] = prev;
    values[i] = varint(bytes, end);
  }
  if (cursor !== end) throw new RangeError(`term counts: ${end - cursor} bytes left over`);
  return { indices, values };
}

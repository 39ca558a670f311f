/**
 * MurmurHash3, x86 32-bit variant (Austin Appleby, SMHasher, public domain
 * reference `MurmurHash3_x86_32`). Returns the hash as an unsigned 32-bit
 * integer.
 *
 * @param bytes  input bytes
 * @param seed   32-bit seed (taken modulo 2^32)
 * @param start  first byte to hash (default 0)
 * @param end    one past the last byte to hash (default `bytes.length`)
 */
export function murmur3x86_32(bytes: Uint8Array, seed = 0, start = 0, end = bytes.length): number {
  const c1 = 0xcc9e2d51;
  const c2 = 0x1b873593;
  let h = seed >>> 0;
  const length = end - start;
  const blocksEnd = start + (length & ~3);
  let i = start;
  for (; i < blocksEnd; i += 4) {
    let k = bytes[i] | (bytes[i + 1] << 8) | (bytes[i + 2] << 16) | (bytes[i + 3] << 24);
    k = Math.imul(k, c1);
    k = (k << 15) | (k >>> 17);
    k = Math.imul(k, c2);
    h ^= k;
    h = (h << 13) | (h >>> 19);
    h = (Math.imul(h, 5) + 0xe6546b64) | 0;
  }
  const tail = length & 3;
  if (tail !== 0) {
    let k = 0;
    if (tail === 3) k ^= bytes[i + 2] << 16;
    if (tail >= 2) k ^= bytes[i + 1] << 8;
    k ^= bytes[i];
    k = Math.imul(k, c1);
    k = (k << 15) | (k >>> 17);
    k = Math.imul(k, c2);
    h ^= k;
  }
  h ^= length;
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

const encoder = new TextEncoder();

/** MurmurHash3 x86 32-bit of a string's UTF-8 encoding. */
export function murmur3String(text: string, seed = 0): number {
  return murmur3x86_32(encoder.encode(text), seed);
}

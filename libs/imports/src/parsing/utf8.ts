/**
 * Offset of the first byte that does not belong to a well-formed UTF-8
 * sequence in `bytes[start, end)`, or -1 when the range is well-formed.
 *
 * Well-formedness follows the Unicode Standard, Table 3-7 (the same rules as
 * RFC 3629): no overlong forms, no surrogates (U+D800–U+DFFF), nothing above
 * U+10FFFF, no truncated sequence at the end of the range. The offset is the
 * sequence's lead byte (or the stray continuation byte).
 */
export function findInvalidUtf8(bytes: Uint8Array, start = 0, end = bytes.length): number {
  let i = start;
  while (i < end) {
    const b = bytes[i];
    if (b < 0x80) {
      i += 1;
      continue;
    }
    let need: number;
    let lo = 0x80;
    let hi = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      if (b === 0xe0) lo = 0xa0;
      else if (b === 0xed) hi = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      if (b === 0xf0) lo = 0x90;
      else if (b === 0xf4) hi = 0x8f;
    } else return i;
    if (i + need >= end) return i;
    const second = bytes[i + 1];
    if (second < lo || second > hi) return i;
    for (let k = 2; k <= need; k += 1) {
      const c = bytes[i + k];
      if (c < 0x80 || c > 0xbf) return i;
    }
    i += need + 1;
  }
  return -1;
}

// Validation happens before decoding, so the decoder never meets a bad byte;
// `ignoreBOM` keeps a U+FEFF that is not at the start of the file as text.
const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });

/** Decodes bytes already checked with {@link findInvalidUtf8}. */
export function decodeUtf8(bytes: Uint8Array): string {
  return decoder.decode(bytes);
}

/** A description of the invalid byte at `offset`, for a rejection reason. */
export function describeInvalidByte(bytes: Uint8Array, offset: number): string {
  return `byte 0x${bytes[offset].toString(16).padStart(2, '0')} at offset ${offset}`;
}

import { describe, expect, it } from 'vitest';
import { describeInvalidByte, findInvalidUtf8 } from './utf8.js';

const bytes = (...values: number[]): Uint8Array => Uint8Array.from(values);

describe('findInvalidUtf8', () => {
  it('accepts well-formed sequences of every length, including U+FFFD itself', () => {
    expect(findInvalidUtf8(new TextEncoder().encode('a é € 😀 \uFFFD'))).toBe(-1);
    expect(findInvalidUtf8(bytes(0xef, 0xbf, 0xbd))).toBe(-1);
    expect(findInvalidUtf8(bytes(0xf4, 0x8f, 0xbf, 0xbf))).toBe(-1); // U+10FFFF
  });

  // Unicode Standard, Table 3-7 (well-formed UTF-8 byte sequences).
  it.each([
    ['a lone continuation byte', bytes(0x61, 0x80), 1],
    ['an overlong two-byte form', bytes(0x61, 0xc0, 0x80), 1],
    ['C1, always overlong', bytes(0xc1, 0xbf), 0],
    ['an overlong three-byte form', bytes(0xe0, 0x80, 0x80), 0],
    ['a surrogate', bytes(0x61, 0x62, 0xed, 0xa0, 0x80), 2],
    ['a code point above U+10FFFF', bytes(0xf4, 0x90, 0x80, 0x80), 0],
    ['F5, never a lead byte', bytes(0xf5, 0x80, 0x80, 0x80), 0],
    ['FF', bytes(0x61, 0xff), 1],
    ['a sequence truncated at the end', bytes(0x61, 0xe2, 0x82), 1],
    ['a sequence cut by an ASCII byte', bytes(0xe2, 0x22, 0xac), 0],
  ])('finds %s', (_name, input, offset) => {
    expect(findInvalidUtf8(input)).toBe(offset);
  });

  it('checks only the given range', () => {
    const input = bytes(0xff, 0x61, 0x62, 0xff);
    expect(findInvalidUtf8(input, 1, 3)).toBe(-1);
    expect(findInvalidUtf8(input, 1)).toBe(3);
  });

  it('agrees with a fatal TextDecoder on random byte strings', () => {
    const decoder = new TextDecoder('utf-8', { fatal: true });
    let seed = 12345;
    const next = (): number => {
      // Park–Miller minimal standard generator, for reproducible cases.
      seed = (seed * 16807) % 2147483647;
      return seed;
    };
    const interesting = [
      0x00, 0x41, 0x7f, 0x80, 0x8f, 0x90, 0x9f, 0xa0, 0xbf, 0xc0, 0xc2, 0xdf, 0xe0, 0xed, 0xef, 0xf0, 0xf4, 0xf5, 0xff,
    ];
    let invalidCases = 0;
    const disagreements: number[][] = [];
    for (let n = 0; n < 5000; n += 1) {
      const input = Uint8Array.from({ length: 1 + (next() % 6) }, () => interesting[next() % interesting.length]);
      let decodes = true;
      try {
        decoder.decode(input);
      } catch {
        decodes = false;
      }
      if (!decodes) invalidCases += 1;
      if ((findInvalidUtf8(input) === -1) !== decodes) disagreements.push([...input]);
    }
    expect(disagreements).toEqual([]);
    expect(invalidCases).toBeGreaterThan(1000);
  });
});

describe('describeInvalidByte', () => {
  it('names the byte in hex and its offset', () => {
    expect(describeInvalidByte(bytes(0x61, 0xc3), 1)).toBe('byte 0xc3 at offset 1');
  });
});

import { describe, expect, it } from 'vitest';
import { murmur3String, murmur3x86_32 } from './murmur3.js';

describe('murmur3x86_32', () => {
  it('passes the SMHasher verification test', () => {
    // SMHasher verification value for MurmurHash3_x86_32, Appleby [paper]:
    // hash [0..i-1] with seed 256-i, then hash the
    // little-endian concatenation of the 256 results with seed 0.
    const all = new Uint8Array(1024);
    const view = new DataView(all.buffer);
    const key = new Uint8Array(256);
    for (let i = 0; i < 256; i++) {
      key[i] = i;
      view.setUint32(i * 4, murmur3x86_32(key, 256 - i, 0, i), true);
    }
    expect(murmur3x86_32(all, 0)).toBe(0xb0f57ee3);
  });

  it('matches the published vectors', () => {
    // Published MurmurHash3 x86 32-bit test vectors (Appleby, SMHasher) [reproduced].
    expect(murmur3String('', 0)).toBe(0x00000000);
    expect(murmur3String('', 1)).toBe(0x514e28b7);
    expect(murmur3String('', 0xffffffff)).toBe(0x81f16f39);
    expect(murmur3x86_32(Uint8Array.of(0x21, 0x43, 0x65, 0x87), 0)).toBe(0xf55b516b);
    expect(murmur3String('Hello, world!', 0x9747b28c)).toBe(0x24884cba);
    expect(murmur3String('The quick brown fox jumps over the lazy dog', 0x9747b28c)).toBe(0x2fa826cd);
    expect(murmur3String('abc', 0)).toBe(0xb3dd93fa);
  });

  it('hashes a sub-range the same as a copy of it', () => {
    const bytes = new TextEncoder().encode('xxabcyy');
    expect(murmur3x86_32(bytes, 7, 2, 5)).toBe(murmur3String('abc', 7));
  });
});

import { describe, expect, it } from 'vitest';
import { newErasureSalt, subjectHash } from './subject-hash.js';

describe('subjectHash', () => {
  it('is HMAC-SHA256 as RFC 4231 specifies it', () => {
    // RFC 4231, test case 2: key "Jefe", data "what do ya want for nothing?".
    const key = Buffer.from('Jefe').toString('hex');
    expect(subjectHash(key, 'what do ya want for nothing?')).toBe(
      '5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843',
    );
  });

  it('depends on the salt, keeps null, and makes a 256-bit salt', () => {
    const a = newErasureSalt();
    const b = newErasureSalt();
    expect(a).toMatch(/^[0-9a-f]{64}$/);
    expect(a).not.toBe(b);
    expect(subjectHash(a, 'post-17')).not.toBe(subjectHash(b, 'post-17'));
    expect(subjectHash(a, 'post-17')).toBe(subjectHash(a, 'post-17'));
    expect(subjectHash(a, null)).toBeNull();
  });
});

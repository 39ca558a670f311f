import { describe, expect, it } from 'vitest';
import { hashPassword, newSecret, secretHash, verifyPassword } from './secrets.js';

describe('password hashing', () => {
  it('verifies the right password and refuses a wrong one', async () => {
    const h = await hashPassword('correct horse battery');
    expect(h).toMatch(/^scrypt\$32768\$8\$1\$/);
    await expect(verifyPassword('correct horse battery', h)).resolves.toBe(true);
    await expect(verifyPassword('correct horse batterY', h)).resolves.toBe(false);
  });
  it('salts: the same password hashes differently twice', async () => {
    expect(await hashPassword('same-password')).not.toBe(await hashPassword('same-password'));
  });
  it('refuses short passwords and malformed hashes', async () => {
    await expect(hashPassword('short')).rejects.toThrow(RangeError);
    await expect(verifyPassword('x', 'plain')).resolves.toBe(false);
  });
});

describe('secrets', () => {
  it('are random, prefixed, and stored as SHA-256', () => {
    const a = newSecret('token');
    expect(a).toMatch(/^cbt_[A-Za-z0-9_-]{43}$/);
    expect(newSecret('token')).not.toBe(a);
    // SHA-256("abc"), FIPS 180-2 Appendix B.1.
    expect(secretHash('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
});

import { createHash, randomBytes, scrypt, timingSafeEqual } from 'node:crypto';
import { promisify } from 'node:util';

const scryptAsync = promisify(scrypt) as (
  pw: string,
  salt: Buffer,
  keylen: number,
  opts: { N: number; r: number; p: number; maxmem: number },
) => Promise<Buffer>;

// scrypt cost: N = 2^15, r = 8, p = 1 (the parameters RFC 7914 §2 discusses for
// interactive logins; OWASP's password storage guidance lists the same; from memory).
const N = 2 ** 15;
const R = 8;
const P = 1;
const KEYLEN = 32;

/** Hashes a password with scrypt; the result carries its own parameters and salt. */
export async function hashPassword(password: string): Promise<string> {
  if (password.length < 8) throw new RangeError('password: at least 8 characters');
  const salt = randomBytes(16);
  const key = await scryptAsync(password.normalize('NFKC'), salt, KEYLEN, { N, r: R, p: P, maxmem: 64 * 1024 * 1024 });
  return `scrypt$${N}$${R}$${P}$${salt.toString('base64url')}$${key.toString('base64url')}`;
}

/** Constant-time check of a password against a stored hash. */
export async function verifyPassword(password: string, stored: string): Promise<boolean> {
  const parts = stored.split('$');
  if (parts.length !== 6 || parts[0] !== 'scrypt') return false;
  const [, n, r, p, salt, key] = parts as [string, string, string, string, string, string];
  const expected = Buffer.from(key, 'base64url');
  const actual = await scryptAsync(password.normalize('NFKC'), Buffer.from(salt, 'base64url'), expected.length, {
    N: Number(n),
    r: Number(r),
    p: Number(p),
    maxmem: 64 * 1024 * 1024,
  });
  return actual.length === expected.length && timingSafeEqual(actual, expected);
}

/** A new random secret for a token or session; the prefix tells them apart in logs and leaks. */
export function newSecret(kind: 'token' | 'session'): string {
  return `${kind === 'token' ? 'cbt' : 'cbs'}_${randomBytes(32).toString('base64url')}`;
}

/** What is stored of a secret: its SHA-256 (a random 256-bit secret needs no slow hash). */
export function secretHash(secret: string): string {
  return createHash('sha256').update(secret).digest('hex');
}

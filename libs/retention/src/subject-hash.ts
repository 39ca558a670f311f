import { createHmac, randomBytes } from 'node:crypto';

/** A new desk salt: 32 random bytes, hex. */
export function newErasureSalt(): string {
  return randomBytes(32).toString('hex');
}

/**
 * The keyed hash a tombstone keeps of an erased external id or source: HMAC-SHA256 (RFC 2104, FIPS 180-4) keyed with
 * the desk's salt, hex. Without the salt, a short id cannot be recovered by hashing guesses; with it, the desk can
 * still answer whether it held something about a given id. Null stays null.
 */
export function subjectHash(salt: string, value: string | null): string | null {
  if (value === null) return null;
  return createHmac('sha256', Buffer.from(salt, 'hex')).update(value, 'utf8').digest('hex');
}

import list from './common-passwords.json' with { type: 'json' };
import { foldPassword } from './select-common-passwords.js';

/** Shortest password a person may choose, in characters (NIST SP 800-63B, section 5.1.1.2: at least 8). */
export const PASSWORD_MIN = 8;
/** Longest (the same section asks that at least 64 be allowed). */
export const PASSWORD_MAX = 500;

const COMMON: ReadonlySet<string> = new Set(list);

/** Runs of characters whose code points step by +1 or −1 all along ("12345678", "hgfedcba"). */
function sequential(chars: string[]): boolean {
  const codes = chars.map((c) => c.codePointAt(0)!);
  const step = codes[1] - codes[0];
  return (step === 1 || step === -1) && codes.every((c, i) => i === 0 || c - codes[i - 1] === step);
}

/**
 * Why a new password is refused, or null when it may be used. The rules of NIST SP 800-63B, section 5.1.1.2
 * (memorized secret verifiers): at least {@link PASSWORD_MIN} characters, every printable character and space
 * allowed, no composition rules (no demands for digits or symbols), and a check against a list of commonly used or
 * breached passwords, repetitive or sequential characters, and context-specific words (the service's name, the
 * account's name). Characters are counted as Unicode code points after NFKC normalisation, as the verifier hashes
 * them.
 */
export function passwordProblem(password: string, context: { userName?: string } = {}): string | null {
  const normal = password.normalize('NFKC');
  // Code points, as NIST counts characters (each emoji part is one).
  const chars = Array.from(normal);
  if (chars.length < PASSWORD_MIN) return `password: at least ${PASSWORD_MIN} characters (got ${chars.length})`;
  if (chars.length > PASSWORD_MAX) return `password: at most ${PASSWORD_MAX} characters`;
  if (new Set(chars).size === 1) return 'password: one character repeated is too easy to guess';
  if (sequential(chars)) return 'password: a run of consecutive characters is too easy to guess';
  const folded = foldPassword(normal);
  if (COMMON.has(folded)) return 'password: this is one of the most common passwords; choose another';
  const words = ['cribra', context.userName?.normalize('NFKC').toLowerCase()].filter(
    (w): w is string => w !== undefined && w.length >= 3,
  );
  for (const w of words) {
    // The word alone, or padded with a few characters or with digits and symbols, adds little to guess.
    const rest = folded.replaceAll(w, '');
    if (rest.length < folded.length && (Array.from(rest).length <= 4 || /^[\p{N}\p{P}\p{S}\s]*$/u.test(rest)))
      return `password: too close to ${w === 'cribra' ? "the service's name" : 'the account name'}`;
  }
  return null;
}

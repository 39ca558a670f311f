import { murmur3String } from '../hashing/murmur3.js';
import { foldString } from './fold.js';

/**
 * Normalised text for duplicate detection: folded as for seed-term matching
 * (compatibility forms, case, Latin/Greek/Cyrillic accents), every run of
 * characters that are not letters, digits or marks collapsed to one space,
 * trimmed. Common practice, no source.
 */
export function normalizeForDuplicates(text: string): string {
  if (typeof text !== 'string') throw new TypeError(`text must be a string, got ${typeof text}`);
  return foldString(text)
    .replace(/[^\p{L}\p{N}\p{M}]+/gu, ' ')
    .trim();
}

/** MurmurHash3 x86 32-bit of {@link normalizeForDuplicates}: equal for near-identical texts. */
export function normalizedTextHash(text: string): number {
  return murmur3String(normalizeForDuplicates(text), 0);
}

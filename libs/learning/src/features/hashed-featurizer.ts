import { murmur3x86_32 } from '../hashing/murmur3.js';
import type { SparseVector } from './sparse-vector.js';

/**
 * Default number of hash bits: 18 (2^18 = 262 144 buckets).
 *
 * Measurement (`bench/hash-bits.bench.ts`): SpamAssassin, subject + first
 * 3 000 body characters, seeded 60/20/20 splits 1–3, default training (which
 * keeps the 16 384 most frequent buckets), macro-F1 on the test split:
 *   14 bits 0.925 / 0.924 / 0.897, mean 0.915 (16 384 buckets used)
 *   16 bits 0.914 / 0.920 / 0.900, mean 0.912 (65 535 used)
 *   18 bits 0.910 / 0.921 / 0.893, mean 0.908 (250 616 used)
 *   20 bits 0.910 / 0.921 / 0.890, mean 0.907 (567 208 used)
 * The spread between splits (~0.03) is larger than the spread between sizes
 * (0.008), so on this corpus the size does not matter for accuracy. The
 * corpus has at least 567 000 distinct hashed n-grams: at 14 bits some 35 of
 * them share each bucket, at 18 about 2. 18 bits keeps distinct features
 * mostly apart for pools richer than this one English corpus (many scripts,
 * many more character n-grams) at a cost of 1 MB for the document-frequency
 * table and the model's bucket lookup; training cost does not grow with it
 * (buckets are compacted and capped before training).
 */
export const DEFAULT_HASH_BITS = 18;

export interface FeaturizerOptions {
  /** log2 of the number of buckets, 4…26 (default {@link DEFAULT_HASH_BITS}). */
  hashBits?: number;
  /** Longest word n-gram (1 = unigrams only; default 2: unigrams and bigrams). */
  maxWordNgram?: 1 | 2;
  /** Character n-gram sizes within word boundaries, or null for none (default [3, 5]). */
  charNgrams?: readonly [number, number] | null;
}

export interface Featurizer {
  readonly hashBits: number;
  readonly options: Readonly<Required<FeaturizerOptions>>;
  /** Raw term counts of one text, hashed; indices ascending. */
  counts(text: string): SparseVector;
  /** Normalised word tokens of a text (NFKC, case-folded), as the featuriser sees them. */
  tokens(text: string): string[];
}

// Separate seeds give word unigrams, word bigrams and character n-grams
// separate hash families, so "the" the word and "the" the trigram differ.
const SEED_WORD = 0x2c9277b5;
const SEED_BIGRAM = 0x5ee5b11d;
const SEED_CHAR = 0x1b873593;

const OTHER = 1;
const WORD = 2;
/** Characters of scripts written without spaces between words: each is a token. */
const SOLO = 3;

const WORD_RE = /^[\p{L}\p{N}\p{M}]$/u;
const SOLO_RE = /^[\p{Script=Han}\p{Script=Hiragana}\p{Script=Katakana}]$/u;
let classTable: Uint8Array | null = null;

function classOf(cp: number): number {
  if (classTable === null) {
    classTable = new Uint8Array(0x110000);
    for (let c = 0; c < 128; c++) {
      const ch = String.fromCharCode(c);
      classTable[c] = /[a-zA-Z0-9]/.test(ch) ? WORD : OTHER;
    }
  }
  let k = classTable[cp];
  if (k === 0) {
    const ch = String.fromCodePoint(cp);
    k = SOLO_RE.test(ch) ? SOLO : WORD_RE.test(ch) ? WORD : OTHER;
    classTable[cp] = k;
  }
  return k;
}

/** NFKC then case folding (upper-then-lower case: JavaScript has no case-fold primitive). */
export function normalizeForFeatures(text: string): string {
  return text.normalize('NFKC').toUpperCase().toLowerCase();
}

/**
 * Creates a featuriser: Unicode-aware tokens (runs of letters, digits and
 * marks of any script; each Han/Kana character its own token), word unigrams
 * and bigrams, and character n-grams of each word padded with one space on
 * each side (scikit-learn's `char_wb` analyser), each hashed with MurmurHash3
 * x86 32-bit over its UTF-8 bytes into 2^hashBits buckets (the hashing trick,
 * Weinberger et al. 2009).
 */
export function createFeaturizer(options: FeaturizerOptions = {}): Featurizer {
  const hashBits = options.hashBits ?? DEFAULT_HASH_BITS;
  if (!Number.isInteger(hashBits) || hashBits < 4 || hashBits > 26) {
    throw new RangeError(`hashBits must be an integer in 4…26, got ${hashBits}`);
  }
  const maxWordNgram = options.maxWordNgram ?? 2;
  if (![1, 2].includes(maxWordNgram)) throw new RangeError(`maxWordNgram must be 1 or 2, got ${maxWordNgram}`);
  const charNgrams = options.charNgrams === undefined ? ([3, 5] as const) : options.charNgrams;
  if (charNgrams !== null) {
    const [lo, hi] = charNgrams;
    if (!Number.isInteger(lo) || !Number.isInteger(hi) || lo < 1 || hi < lo || hi > 10) {
      throw new RangeError(`charNgrams must be [min, max] with 1 ≤ min ≤ max ≤ 10, got [${lo}, ${hi}]`);
    }
  }
  const mask = (1 << hashBits) - 1;
  const counts = new Uint32Array(1 << hashBits);
  let touched = new Int32Array(4096);
  let nTouched = 0;
  // Scratch: the current token padded with spaces, its code-point byte offsets,
  // and the previous token's bytes for bigrams.
  let bytes = new Uint8Array(256);
  let cpOffsets = new Int32Array(256);
  let prev = new Uint8Array(256);
  let prevLength = -1;
  let pair = new Uint8Array(512);

  function add(hash: number): void {
    const index = hash & mask;
    if (counts[index]++ === 0) {
      if (nTouched === touched.length) {
        const grown = new Int32Array(touched.length * 2);
        grown.set(touched);
        touched = grown;
      }
      touched[nTouched++] = index;
    }
  }

  /** Encodes s[start, end) as UTF-8 into `bytes` after a leading space; returns code points. */
  function encodeToken(s: string, start: number, end: number): number {
    const need = 3 * (end - start) + 2;
    if (bytes.length < need) {
      bytes = new Uint8Array(need * 2);
      cpOffsets = new Int32Array(need * 2);
    }
    bytes[0] = 0x20;
    cpOffsets[0] = 0;
    let b = 1;
    let cps = 1;
    for (let i = start; i < end; i++) {
      cpOffsets[cps++] = b;
      let c = s.charCodeAt(i);
      if (c < 0x80) {
        bytes[b++] = c;
      } else if (c < 0x800) {
        bytes[b++] = 0xc0 | (c >> 6);
        bytes[b++] = 0x80 | (c & 63);
      } else if (c >= 0xd800 && c < 0xdc00 && i + 1 < end && (s.charCodeAt(i + 1) & 0xfc00) === 0xdc00) {
        c = 0x10000 + ((c - 0xd800) << 10) + (s.charCodeAt(++i) - 0xdc00);
        bytes[b++] = 0xf0 | (c >> 18);
        bytes[b++] = 0x80 | ((c >> 12) & 63);
        bytes[b++] = 0x80 | ((c >> 6) & 63);
        bytes[b++] = 0x80 | (c & 63);
      } else {
        if (c >= 0xd800 && c < 0xe000) c = 0xfffd;
        bytes[b++] = 0xe0 | (c >> 12);
        bytes[b++] = 0x80 | ((c >> 6) & 63);
        bytes[b++] = 0x80 | (c & 63);
      }
    }
    cpOffsets[cps] = b;
    bytes[b] = 0x20;
    cpOffsets[cps + 1] = b + 1;
    // cps now counts the leading space and the token's code points; the
    // trailing space makes `cps + 1` code points in the padded token.
    return cps + 1;
  }

  function emitToken(s: string, start: number, end: number): void {
    const padded = encodeToken(s, start, end);
    const tokenBytes = cpOffsets[padded - 1] - 1;
    add(murmur3x86_32(bytes, SEED_WORD, 1, 1 + tokenBytes));
    if (maxWordNgram === 2) {
      if (prevLength >= 0) {
        const n = prevLength + 1 + tokenBytes;
        if (pair.length < n) pair = new Uint8Array(n * 2);
        pair.set(prev.subarray(0, prevLength), 0);
        pair[prevLength] = 0x20;
        pair.set(bytes.subarray(1, 1 + tokenBytes), prevLength + 1);
        add(murmur3x86_32(pair, SEED_BIGRAM, 0, n));
      }
      if (prev.length < tokenBytes) prev = new Uint8Array(tokenBytes * 2);
      prev.set(bytes.subarray(1, 1 + tokenBytes), 0);
      prevLength = tokenBytes;
    }
    if (charNgrams !== null) {
      const [lo, hi] = charNgrams;
      for (let n = lo; n <= hi && n <= padded; n++) {
        for (let s0 = 0; s0 + n <= padded; s0++) {
          add(murmur3x86_32(bytes, SEED_CHAR + n, cpOffsets[s0], cpOffsets[s0 + n]));
        }
      }
    }
  }

  function scan(s: string, onToken: (start: number, end: number) => void): void {
    let start = -1;
    let i = 0;
    const n = s.length;
    while (i < n) {
      let cp = s.charCodeAt(i);
      let width = 1;
      if (cp >= 0xd800 && cp < 0xdc00 && i + 1 < n) {
        const lo = s.charCodeAt(i + 1);
        if ((lo & 0xfc00) === 0xdc00) {
          cp = 0x10000 + ((cp - 0xd800) << 10) + (lo - 0xdc00);
          width = 2;
        }
      }
      const k = classOf(cp);
      if (k === WORD) {
        if (start < 0) start = i;
      } else {
        if (start >= 0) {
          onToken(start, i);
          start = -1;
        }
        if (k === SOLO) onToken(i, i + width);
      }
      i += width;
    }
    if (start >= 0) onToken(start, n);
  }

  function countsOf(text: string): SparseVector {
    if (typeof text !== 'string') throw new TypeError(`text must be a string, got ${typeof text}`);
    const s = normalizeForFeatures(text);
    nTouched = 0;
    prevLength = -1;
    scan(s, (a, b) => emitToken(s, a, b));
    const indices = touched.slice(0, nTouched).sort();
    const values = new Float64Array(nTouched);
    for (let i = 0; i < nTouched; i++) {
      values[i] = counts[indices[i]];
      counts[indices[i]] = 0;
    }
    return { indices, values };
  }

  return {
    hashBits,
    options: { hashBits, maxWordNgram, charNgrams },
    counts: countsOf,
    tokens(text: string): string[] {
      const s = normalizeForFeatures(text);
      const out: string[] = [];
      scan(s, (a, b) => out.push(s.slice(a, b)));
      return out;
    },
  };
}

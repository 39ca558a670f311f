import { foldString, foldText } from './fold.js';

/** One seed-term occurrence; offsets are UTF-16 indices into the original text. */
export interface SeedMatch {
  /** Start index (inclusive) into the text exactly as given. */
  start: number;
  /** End index (exclusive): `text.slice(start, end)` is the matched passage. */
  end: number;
  category: string;
  /** The seed term as the supervisor wrote it. */
  term: string;
}

export interface SeedTermMatcher {
  /** Matches sorted by start, non-overlapping (leftmost, then longest). */
  match(text: string): SeedMatch[];
  /** Number of matches `match` would return. */
  count(text: string): number;
  /** Number of distinct usable terms compiled. */
  readonly size: number;
}

const WORD = /[\p{L}\p{N}\p{M}]/u;

interface Word {
  text: string;
  start: number;
  end: number;
}

/** Splits folded text into words (runs of letters, digits and marks) with original offsets. */
function foldedWords(original: string): Word[] {
  const folded = foldText(original);
  const words: Word[] = [];
  const t = folded.text;
  let i = 0;
  let current: string[] = [];
  let start = -1;
  let end = -1;
  while (i < t.length) {
    const code = t.codePointAt(i)!;
    const width = code > 0xffff ? 2 : 1;
    const cp = t.slice(i, i + width);
    if (WORD.test(cp)) {
      if (start < 0) start = folded.sourceStart[i];
      current.push(cp);
      end = folded.sourceEnd[i + width - 1];
    } else if (start >= 0) {
      words.push({ text: current.join(''), start, end });
      current = [];
      start = -1;
    }
    i += width;
  }
  if (start >= 0) words.push({ text: current.join(''), start, end });
  return words;
}

/** Folds a seed term into its word sequence, or [] if it holds no letter or digit. */
function termWords(term: string): string[] {
  return foldedWords(foldString(term)).map((w) => w.text);
}

/** A seed term ending in `*` (spaces after it allowed) matches any ending of its last word. */
const ANY_ENDING = /\*\s*$/u;

/** The shortest last word a term ending in `*` may have: one letter would match a large part of any language. */
export const MIN_WORD_ENDING_STEM = 2;

const GRAPHEMES = new Intl.Segmenter(undefined, { granularity: 'grapheme' });

/** The number of characters a reader sees in `word` (a letter with its marks counts once). */
function graphemes(word: string): number {
  let n = 0;
  for (const _ of GRAPHEMES.segment(word)) n++;
  return n;
}

/** A seed term as the matcher reads it: its folded words and whether the last one takes any ending. */
export interface ParsedSeedTerm {
  words: string[];
  anyEnding: boolean;
}

/**
 * Reads a seed term: folded words (as the matcher compares them), whether it
 * ends in `*`, and, when the word before `*` is shorter than
 * {@link MIN_WORD_ENDING_STEM} characters, the problem in words (the desk
 * settings refuse such a term; the matcher reads it as the bare word, which
 * is what it meant before `*` had a meaning).
 */
export function parseSeedTerm(term: string): ParsedSeedTerm & { problem?: string } {
  const words = termWords(term);
  if (!ANY_ENDING.test(term) || words.length === 0) return { words, anyEnding: false };
  if (graphemes(words[words.length - 1]) < MIN_WORD_ENDING_STEM) {
    return {
      words,
      anyEnding: false,
      problem: `${JSON.stringify(term)} ends in * after a single character; give at least ${MIN_WORD_ENDING_STEM} characters before *`,
    };
  }
  return { words, anyEnding: true };
}

interface Entry {
  category: string;
  term: string;
}

/**
 * Compiles per-category seed terms into a matcher. Matching is case-, accent-
 * and compatibility-insensitive (NFKD mapping, case folding, diacritics of
 * Latin, Greek and Cyrillic dropped) and whole-word: the text and each term
 * are split into words of letters and digits, and a term matches a run of
 * consecutive words equal to its own, whatever punctuation or spacing lies
 * between them (so "e-mail" also matches "e mail"). Scanning is leftmost
 * first, longest term (in words) at a position wins; a term listed under
 * several categories reports the first category in `seedTerms` order.
 * Leftmost-longest matching: common practice, no source.
 *
 * A term ending in `*` matches any ending of its last word, the bare word
 * included (`hota*` matches "hota", "hotar", "hotade"), for keyword lists in
 * inflected languages; the whole word is reported, so a highlight marks it
 * all. At a position, a term without `*` wins over one with it when both
 * span the same number of words.
 *
 * @param seedTerms category → terms; terms without any letter or digit are ignored.
 * @throws TypeError if `seedTerms` is not an object of string arrays.
 */
export function compileSeedTerms(seedTerms: Record<string, string[]>): SeedTermMatcher {
  // Seed terms come from JSON (the API, the database): checked as received.
  const given: unknown = seedTerms;
  if (given === null || typeof given !== 'object' || Array.isArray(given)) {
    throw new TypeError(`seedTerms must be an object mapping categories to term lists, got ${String(given)}`);
  }
  const table = new Map<string, Entry>();
  // Terms ending in `*`: key = the words before the last, a tab, the stem of the last.
  const stems = new Map<string, Entry>();
  const stemLengths = new Set<number>();
  let maxWords = 0;
  for (const [category, terms] of Object.entries(seedTerms)) {
    if (!Array.isArray(terms)) {
      throw new TypeError(`seedTerms[${JSON.stringify(category)}] must be an array of strings, got ${typeof terms}`);
    }
    for (const term of terms) {
      if (typeof term !== 'string') {
        throw new TypeError(`seedTerms[${JSON.stringify(category)}] holds a non-string term: ${String(term)}`);
      }
      const { words, anyEnding } = parseSeedTerm(term);
      if (words.length === 0) continue;
      if (anyEnding) {
        const stem = words[words.length - 1];
        const key = `${words.slice(0, -1).join(' ')}\t${stem}`;
        if (!stems.has(key)) stems.set(key, { category, term });
        stemLengths.add(stem.length);
      } else {
        const key = words.join(' ');
        if (!table.has(key)) table.set(key, { category, term });
      }
      maxWords = Math.max(maxWords, words.length);
    }
  }

  function match(text: string): SeedMatch[] {
    if (typeof text !== 'string') throw new TypeError(`text must be a string, got ${typeof text}`);
    if (table.size === 0 && stems.size === 0) return [];
    const words = foldedWords(text);
    const lengths = [...stemLengths].sort((a, b) => b - a);
    /** The entry of a term ending in `*` that the n words at i match (longest stem first), if any. */
    const byStem = (i: number, n: number): Entry | undefined => {
      if (stems.size === 0) return undefined;
      let head = '';
      for (let j = 0; j < n - 1; j++) head += (j > 0 ? ' ' : '') + words[i + j].text;
      const last = words[i + n - 1].text;
      for (const length of lengths) {
        if (length > last.length) continue;
        const entry = stems.get(`${head}\t${last.slice(0, length)}`);
        if (entry !== undefined) return entry;
      }
      return undefined;
    };
    const out: SeedMatch[] = [];
    let lastEnd = 0;
    let i = 0;
    while (i < words.length) {
      let matched = 0;
      const limit = Math.min(maxWords, words.length - i);
      for (let n = limit; n >= 1 && matched === 0; n--) {
        let key = words[i].text;
        for (let j = 1; j < n; j++) key += ' ' + words[i + j].text;
        const entry = table.get(key) ?? byStem(i, n);
        // A code point that folds to several words (e.g. "½") can give two
        // words the same source range; never report overlapping ranges.
        if (entry !== undefined && words[i].start >= lastEnd) {
          out.push({ start: words[i].start, end: words[i + n - 1].end, category: entry.category, term: entry.term });
          lastEnd = words[i + n - 1].end;
          matched = n;
        }
      }
      i += matched > 0 ? matched : 1;
    }
    return out;
  }

  return {
    match,
    count: (text: string) => match(text).length,
    size: table.size + stems.size,
  };
}

/** Most terms one category may have. */
export const MAX_SEED_TERMS = 200;
/** Longest seed term, in characters. */
export const MAX_SEED_TERM_LENGTH = 100;

/**
 * Checks seed terms as a desk receives them (JSON: category → list of
 * terms) against its categories, and returns them cleaned (trimmed, blanks
 * and repeats dropped, categories without a term left out) with every
 * problem found, each naming its category. The one rule for the desk
 * settings and for `rehearse --seed-terms`.
 */
export function checkSeedTerms(
  seedTerms: unknown,
  categories: readonly string[],
): { seedTerms: Record<string, string[]>; problems: string[] } {
  const out: Record<string, string[]> = {};
  if (seedTerms === undefined || seedTerms === null) return { seedTerms: out, problems: [] };
  if (typeof seedTerms !== 'object' || Array.isArray(seedTerms))
    return {
      seedTerms: out,
      problems: ['seedTerms: expected an object mapping category names to lists of terms'],
    };
  const problems: string[] = [];
  for (const [category, terms] of Object.entries(seedTerms as Record<string, unknown>)) {
    if (!categories.includes(category)) {
      problems.push(`seedTerms.${category}: not a category of this desk`);
      continue;
    }
    if (!Array.isArray(terms) || terms.some((t) => typeof t !== 'string')) {
      problems.push(`seedTerms.${category}: expected a list of strings`);
      continue;
    }
    const clean = [...new Set((terms as string[]).map((t) => t.trim()).filter((t) => t.length > 0))];
    if (clean.length > MAX_SEED_TERMS)
      problems.push(`seedTerms.${category}: at most ${MAX_SEED_TERMS} terms (got ${clean.length})`);
    const long = clean.find((t) => t.length > MAX_SEED_TERM_LENGTH);
    if (long)
      problems.push(
        `seedTerms.${category}: a term is longer than ${MAX_SEED_TERM_LENGTH} characters (${JSON.stringify(long.slice(0, 20))}…)`,
      );
    for (const term of clean) {
      const { problem } = parseSeedTerm(term);
      if (problem !== undefined) problems.push(`seedTerms.${category}: ${problem}`);
    }
    if (clean.length > 0) out[category] = clean;
  }
  return { seedTerms: out, problems };
}

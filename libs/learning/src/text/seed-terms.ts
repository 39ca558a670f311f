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
  let maxWords = 0;
  for (const [category, terms] of Object.entries(seedTerms)) {
    if (!Array.isArray(terms)) {
      throw new TypeError(`seedTerms[${JSON.stringify(category)}] must be an array of strings, got ${typeof terms}`);
    }
    for (const term of terms) {
      if (typeof term !== 'string') {
        throw new TypeError(`seedTerms[${JSON.stringify(category)}] holds a non-string term: ${String(term)}`);
      }
      const words = termWords(term);
      if (words.length === 0) continue;
      const key = words.join(' ');
      if (!table.has(key)) table.set(key, { category, term });
      maxWords = Math.max(maxWords, words.length);
    }
  }

  function match(text: string): SeedMatch[] {
    if (typeof text !== 'string') throw new TypeError(`text must be a string, got ${typeof text}`);
    if (table.size === 0) return [];
    const words = foldedWords(text);
    const out: SeedMatch[] = [];
    let lastEnd = 0;
    let i = 0;
    while (i < words.length) {
      let matched = 0;
      const limit = Math.min(maxWords, words.length - i);
      for (let n = limit; n >= 1 && matched === 0; n--) {
        let key = words[i].text;
        for (let j = 1; j < n; j++) key += ' ' + words[i + j].text;
        const entry = table.get(key);
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
    size: table.size,
  };
}

/**
 * Text folding for matching: NFKC/NFKD compatibility mapping, case folding and,
 * for scripts whose diacritics are optional in everyday writing, removal of
 * combining marks. Every folded UTF-16 unit remembers the range of the
 * original string it came from, so matches found in the folded text can be
 * reported as offsets into the text exactly as stored.
 *
 * Folding is done one code point at a time, so the mapping back to the
 * original stays exact even where normalisation changes the length
 * ("ﬁ" → "fi", "Ａ" → "a", "ß" → "ss", "e" + U+0301 → "e").
 */

/** Scripts whose combining marks are dropped (accent-insensitive matching). */
const STRIPS_MARKS = /^[\p{Script=Latin}\p{Script=Greek}\p{Script=Cyrillic}]/u;
const MARK = /\p{M}/u;
const MARKS = /\p{M}/gu;

export interface FoldedCodePoint {
  /** The folded form: zero or more UTF-16 units. */
  readonly text: string;
  /** True when the code point is a combining mark (it extends the preceding word). */
  readonly isMark: boolean;
  /** True when the base character belongs to a script whose marks are dropped. */
  readonly stripsMarks: boolean;
}

const cache = new Map<string, FoldedCodePoint>();

/**
 * Full case folding approximated as upper-then-lower case (JavaScript has no
 * case-fold primitive; this maps "ß" → "ss", "ς" → "σ", "ſ" → "s"), after a
 * compatibility decomposition (NFKD, which is NFKC's mapping before
 * recomposition). Common practice, no source.
 */
function foldUncached(cp: string): FoldedCodePoint {
  const isMark = MARK.test(cp);
  const decomposed = cp.normalize('NFKD');
  const base = decomposed.replace(MARKS, '');
  const stripsMarks = base.length > 0 && STRIPS_MARKS.test(base);
  let text = decomposed.toUpperCase().toLowerCase().normalize('NFKD');
  if (stripsMarks) text = text.replace(MARKS, '');
  return { text, isMark, stripsMarks };
}

/** Folds one code point (given as a string of one or two UTF-16 units). */
export function foldCodePoint(cp: string): FoldedCodePoint {
  let hit = cache.get(cp);
  if (hit === undefined) {
    hit = foldUncached(cp);
    if (cache.size < 65_536) cache.set(cp, hit);
  }
  return hit;
}

/** A folded string with, for every folded unit, the original range it came from. */
export interface FoldedText {
  readonly text: string;
  /** Original start index (UTF-16) of the code point each folded unit came from. */
  readonly sourceStart: Int32Array;
  /** Original end index (exclusive) of that code point, marks it absorbed included. */
  readonly sourceEnd: Int32Array;
}

/**
 * Folds a whole string for accent- and case-insensitive matching, keeping the
 * map back to original offsets. A combining mark that follows a base letter of
 * a mark-stripping script is dropped and its range is absorbed by the
 * preceding folded unit, so a match ending on "e" + U+0301 covers the accent.
 */
export function foldText(original: string): FoldedText {
  const units: string[] = [];
  const starts: number[] = [];
  const ends: number[] = [];
  let previousStrips = false;
  let i = 0;
  while (i < original.length) {
    const code = original.codePointAt(i)!;
    const width = code > 0xffff ? 2 : 1;
    const cp = original.slice(i, i + width);
    const folded = foldCodePoint(cp);
    if (folded.isMark && previousStrips) {
      // Dropped diacritic: widen the previous unit's source range over it.
      if (ends.length > 0) ends[ends.length - 1] = i + width;
    } else {
      for (let j = 0; j < folded.text.length; j++) {
        units.push(folded.text[j]);
        starts.push(i);
        ends.push(i + width);
      }
      if (!folded.isMark) previousStrips = folded.stripsMarks;
    }
    i += width;
  }
  return { text: units.join(''), sourceStart: Int32Array.from(starts), sourceEnd: Int32Array.from(ends) };
}

/** Folds a string without keeping offsets (for seed terms themselves). */
export function foldString(s: string): string {
  return foldText(s).text;
}

/**
 * Characters that change how a text reads without showing themselves: the bidirectional controls (which can make
 * `evil.exe` display as `exe.live`, or reorder the words of a sentence) and the zero-width and invisible format
 * characters (which split a word so that a keyword list no longer matches it, or hide a message inside a text).
 * Names and code points are those of the Unicode Character Database (UnicodeData.txt; bidirectional controls as
 * listed in Unicode Standard Annex #9, "Unicode Bidirectional Algorithm", section 2).
 */
export const HIDDEN_CHARACTERS: ReadonlyMap<string, { short: string; name: string; bidi: boolean }> = new Map([
  ['\u061C', { short: 'ALM', name: 'ARABIC LETTER MARK', bidi: true }],
  ['\u200E', { short: 'LRM', name: 'LEFT-TO-RIGHT MARK', bidi: true }],
  ['\u200F', { short: 'RLM', name: 'RIGHT-TO-LEFT MARK', bidi: true }],
  ['\u202A', { short: 'LRE', name: 'LEFT-TO-RIGHT EMBEDDING', bidi: true }],
  ['\u202B', { short: 'RLE', name: 'RIGHT-TO-LEFT EMBEDDING', bidi: true }],
  ['\u202C', { short: 'PDF', name: 'POP DIRECTIONAL FORMATTING', bidi: true }],
  ['\u202D', { short: 'LRO', name: 'LEFT-TO-RIGHT OVERRIDE', bidi: true }],
  ['\u202E', { short: 'RLO', name: 'RIGHT-TO-LEFT OVERRIDE', bidi: true }],
  ['\u2066', { short: 'LRI', name: 'LEFT-TO-RIGHT ISOLATE', bidi: true }],
  ['\u2067', { short: 'RLI', name: 'RIGHT-TO-LEFT ISOLATE', bidi: true }],
  ['\u2068', { short: 'FSI', name: 'FIRST STRONG ISOLATE', bidi: true }],
  ['\u2069', { short: 'PDI', name: 'POP DIRECTIONAL ISOLATE', bidi: true }],
  ['\u00AD', { short: 'SHY', name: 'SOFT HYPHEN', bidi: false }],
  ['\u034F', { short: 'CGJ', name: 'COMBINING GRAPHEME JOINER', bidi: false }],
  ['\u180E', { short: 'MVS', name: 'MONGOLIAN VOWEL SEPARATOR', bidi: false }],
  ['\u200B', { short: 'ZWSP', name: 'ZERO WIDTH SPACE', bidi: false }],
  ['\u200C', { short: 'ZWNJ', name: 'ZERO WIDTH NON-JOINER', bidi: false }],
  ['\u200D', { short: 'ZWJ', name: 'ZERO WIDTH JOINER', bidi: false }],
  ['\u2060', { short: 'WJ', name: 'WORD JOINER', bidi: false }],
  ['\u2061', { short: 'FA', name: 'FUNCTION APPLICATION', bidi: false }],
  ['\u2062', { short: 'IT', name: 'INVISIBLE TIMES', bidi: false }],
  ['\u2063', { short: 'IS', name: 'INVISIBLE SEPARATOR', bidi: false }],
  ['\u2064', { short: 'IP', name: 'INVISIBLE PLUS', bidi: false }],
  ['\uFEFF', { short: 'ZWNBSP', name: 'ZERO WIDTH NO-BREAK SPACE', bidi: false }],
]);

// Written as escapes: a class of raw joiners and combining marks would read as joined sequences.
const PATTERN = new RegExp(
  `[${[...HIDDEN_CHARACTERS.keys()].map((c) => `\\u{${c.codePointAt(0)!.toString(16)}}`).join('')}]`,
  'gu',
);

/** A stretch of ordinary text, or one hidden character to be shown by a marker. */
export type TextPiece =
  | { kind: 'text'; text: string }
  | { kind: 'hidden'; char: string; short: string; codePoint: string; name: string; bidi: boolean };

/** `U+202E` for '\u202E'. */
export const codePointOf = (char: string): string =>
  `U+${char.codePointAt(0)!.toString(16).toUpperCase().padStart(4, '0')}`;

/**
 * Splits `text` into ordinary stretches and the hidden characters between them, in order; joining every piece's
 * text (`char` for a hidden one) gives `text` back, so nothing is dropped. A screen shows each hidden piece as a
 * visible marker instead of the character itself, so a bidirectional control cannot reorder what follows it.
 */
export function revealHidden(text: string): TextPiece[] {
  const pieces: TextPiece[] = [];
  let at = 0;
  for (const m of text.matchAll(PATTERN)) {
    if (m.index > at) pieces.push({ kind: 'text', text: text.slice(at, m.index) });
    const char = m[0];
    const info = HIDDEN_CHARACTERS.get(char)!;
    pieces.push({ kind: 'hidden', char, codePoint: codePointOf(char), ...info });
    at = m.index + char.length;
  }
  if (at < text.length) pieces.push({ kind: 'text', text: text.slice(at) });
  return pieces;
}

/** How many hidden characters `text` holds. */
export const countHidden = (text: string): number => text.match(PATTERN)?.length ?? 0;

import { describe, expect, it } from 'vitest';
import { codePointOf, countHidden, HIDDEN_CHARACTERS, revealHidden, type TextPiece } from './hidden-characters';

const joined = (pieces: TextPiece[]) => pieces.map((p) => (p.kind === 'text' ? p.text : p.char)).join('');

describe('revealHidden', () => {
  it('leaves a text without hidden characters as one piece, and an empty text as none', () => {
    expect(revealHidden('see you at the bandstand')).toEqual([{ kind: 'text', text: 'see you at the bandstand' }]);
    expect(revealHidden('')).toEqual([]);
    expect(countHidden('plain')).toBe(0);
  });

  it('marks a right-to-left override where it stands, with its Unicode name and code point', () => {
    // The file-name spoof that Unicode Technical Report #36, "Unicode Security Considerations", describes (recalled
    // from memory): "txt.exe" written after U+202E displays reversed.
    const pieces = revealHidden('open invoice\u202Etxt.exe now');
    expect(pieces).toEqual([
      { kind: 'text', text: 'open invoice' },
      {
        kind: 'hidden',
        char: '\u202E',
        short: 'RLO',
        codePoint: 'U+202E',
        name: 'RIGHT-TO-LEFT OVERRIDE',
        bidi: true,
      },
      { kind: 'text', text: 'txt.exe now' },
    ]);
  });

  it('marks zero-width characters inside a word, adjacent ones each, at the start and at the end', () => {
    const text = '\u200Bki\u200B\u200Dll\uFEFF';
    const pieces = revealHidden(text);
    expect(pieces.map((p) => (p.kind === 'text' ? p.text : p.short))).toEqual([
      'ZWSP',
      'ki',
      'ZWSP',
      'ZWJ',
      'll',
      'ZWNBSP',
    ]);
    expect(countHidden(text)).toBe(4);
    expect(joined(pieces)).toBe(text);
  });

  it('drops nothing: every listed character is marked and the pieces join back to the text', () => {
    const all = [...HIDDEN_CHARACTERS.keys()];
    const text = all.map((c, i) => `w${i}${c}`).join(' ') + ' 🙂 naïve';
    const pieces = revealHidden(text);
    expect(pieces.flatMap((p) => (p.kind === 'hidden' ? [p.char] : []))).toEqual(all);
    expect(joined(pieces)).toBe(text);
    expect(new Set(all.map((c) => HIDDEN_CHARACTERS.get(c)!.short)).size).toBe(all.length);
  });

  it('writes code points as U+ and at least four upper-case hex digits', () => {
    expect(codePointOf('\u00AD')).toBe('U+00AD');
    expect(codePointOf('\u2066')).toBe('U+2066');
    expect(codePointOf('🙂')).toBe('U+1F642');
  });
});

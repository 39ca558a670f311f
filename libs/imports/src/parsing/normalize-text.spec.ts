import { describe, expect, it } from 'vitest';
import { hashNormalizedText, normalizeText } from './normalize-text.js';

describe('normalizeText', () => {
  // Compatibility mappings below are those of Unicode Standard Annex #15 (NFKC).
  it('maps full-width letters and the ideographic space to their plain forms (UAX #15, NFKC)', () => {
    expect(normalizeText('Ｈｅｌｌｏ\u3000Ｗｏｒｌｄ')).toBe('hello world');
  });

  it('expands ligatures, circled digits and superscripts (UAX #15, NFKC)', () => {
    expect(normalizeText('\uFB01nd \uFB02ow')).toBe('find flow');
    expect(normalizeText('\u2460 x\u00B2')).toBe('1 x2');
    expect(normalizeText('\uFB06op')).toBe('stop');
  });

  it('composes decomposed sequences and maps the Angstrom sign to å (UAX #15, NFKC)', () => {
    expect(normalizeText('Cafe\u0301')).toBe('caf\u00E9');
    expect(normalizeText('\u212B')).toBe('\u00E5');
  });

  it('folds case, including the full foldings that lower-casing misses', () => {
    expect(normalizeText('HeLLo')).toBe('hello');
    // CaseFolding.txt: 00DF; F; 0073 0073 and 1E9E; F; 0073 0073.
    expect(normalizeText('Straße')).toBe('strasse');
    expect(normalizeText('STRAẞE')).toBe('strasse');
    expect(normalizeText('STRASSE')).toBe('strasse');
    // CaseFolding.txt: 03C2; C; 03C3 (final sigma) — both spellings meet.
    expect(normalizeText('ΟΔΟΣ')).toBe('οδοσ');
    expect(normalizeText('οδος')).toBe('οδοσ');
    // CaseFolding.txt: 1FB3; F; 03B1 03B9 and 1FBC; F; 03B1 03B9.
    expect(normalizeText('\u1FB3')).toBe('\u03B1\u03B9');
    expect(normalizeText('\u1FBC')).toBe('\u03B1\u03B9');
  });

  it('keeps Turkish dotless ı distinct from i, as the default case folding does', () => {
    expect(normalizeText('sık')).toBe('sık');
    expect(normalizeText('sık')).not.toBe(normalizeText('sik'));
  });

  it('collapses every run of whitespace to one space and trims the ends', () => {
    expect(normalizeText('  a\t\tb\r\n\nc\u00A0\u2003d  ')).toBe('a b c d');
    expect(normalizeText('a \t b\u2028c \u3000 d')).toBe('a b c d');
    expect(normalizeText('a b')).toBe('a b');
  });

  it('removes default-ignorable characters such as zero-width spaces and soft hyphens', () => {
    expect(normalizeText('th\u200Bre\u00ADat')).toBe('threat');
    expect(normalizeText('\u200B\u200D\uFEFF')).toBe('');
  });

  it('gives the same form for texts that differ only in width, case, ligatures and spacing', () => {
    expect(normalizeText('Ｔｈｅ  \uFB01NAL   word')).toBe(normalizeText('the final word'));
  });

  it('is idempotent', () => {
    for (const text of ['Ｈｅｌｌｏ', 'Straße', 'ΟΔΟΣ', '\u1FB3\u0345', ' a \u200B b ']) {
      expect(normalizeText(normalizeText(text))).toBe(normalizeText(text));
    }
  });
});

describe('hashNormalizedText', () => {
  it('is SHA-256 in lower-case hex (FIPS 180-2, appendix B.1 example "abc")', () => {
    expect(hashNormalizedText('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });

  it('hashes the UTF-8 bytes of the text (sha256sum of "hello world")', () => {
    expect(hashNormalizedText(normalizeText('  Hello   WORLD '))).toBe(
      'b94d27b9934d3e08a52e52d7da7dabfac484efe37a5380ee9088f7ace2efcde9',
    );
  });
});

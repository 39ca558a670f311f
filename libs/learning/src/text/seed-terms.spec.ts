import { describe, expect, it } from 'vitest';
import { checkSeedTerms, compileSeedTerms, parseSeedTerm } from './seed-terms.js';

function slices(text: string, matcher = compileSeedTerms({ x: ['cafe'] })) {
  return matcher.match(text).map((m) => text.slice(m.start, m.end));
}

describe('compileSeedTerms', () => {
  it('matches case- and accent-insensitively, with offsets into the original text', () => {
    const matcher = compileSeedTerms({ place: ['café'] });
    const text = 'Meet at the CAFE, the Café or the cafe\u0301.';
    const matches = matcher.match(text);
    expect(matches.map((m) => text.slice(m.start, m.end))).toEqual(['CAFE', 'Café', 'cafe\u0301']);
    expect(matches.every((m) => m.category === 'place' && m.term === 'café')).toBe(true);
    expect(matcher.count(text)).toBe(3);
  });

  it('matches full-width and ligature forms, keeping offsets right where length changes', () => {
    const matcher = compileSeedTerms({ a: ['fire'], b: ['knife'] });
    const text = 'ＦＩＲＥ! the ﬁre and a KNIFE… then ﬁre';
    const matches = matcher.match(text);
    expect(matches.map((m) => text.slice(m.start, m.end))).toEqual(['ＦＩＲＥ', 'ﬁre', 'KNIFE', 'ﬁre']);
    expect(matches.map((m) => m.category)).toEqual(['a', 'a', 'b', 'a']);
  });

  it('keeps offsets exact around astral characters and sharp s', () => {
    const matcher = compileSeedTerms({ s: ['strasse'] });
    const text = '😀😀 die Straße 😀 STRASSE';
    expect(slices(text, matcher)).toEqual(['Straße', 'STRASSE']);
  });

  it('matches whole words only', () => {
    const matcher = compileSeedTerms({ v: ['kill'] });
    expect(slices('skill killer kill, kill.', matcher)).toEqual(['kill', 'kill']);
  });

  it('matches multi-word terms across any spacing or punctuation, preferring the longer term', () => {
    const matcher = compileSeedTerms({ threat: ['hurt you'], word: ['hurt'] });
    const text = 'I will HURT\n  you; it does not hurt.';
    const matches = matcher.match(text);
    expect(matches.map((m) => [text.slice(m.start, m.end), m.category])).toEqual([
      ['HURT\n  you', 'threat'],
      ['hurt', 'word'],
    ]);
  });

  it('returns sorted, non-overlapping matches (leftmost, then longest)', () => {
    const matcher = compileSeedTerms({ a: ['a b'], b: ['b c d'], c: ['d'] });
    const text = 'a b c d';
    const matches = matcher.match(text);
    expect(matches.map((m) => m.category)).toEqual(['a', 'c']);
    for (let i = 1; i < matches.length; i++) expect(matches[i].start).toBeGreaterThanOrEqual(matches[i - 1].end);
  });

  it('keeps marks that are part of the letter in non-Latin scripts', () => {
    const matcher = compileSeedTerms({ hi: ['काम'] });
    // "कम" (kam) differs from "काम" (kaam) only by a vowel sign; they must not match.
    expect(slices('कम काम', matcher)).toEqual(['काम']);
    const greek = compileSeedTerms({ g: ['απειλή'] });
    expect(slices('ΑΠΕΙΛΗ και απειλη', greek)).toEqual(['ΑΠΕΙΛΗ', 'απειλη']);
  });

  it('reports the first category when a term is listed twice, and ignores empty terms', () => {
    const matcher = compileSeedTerms({ first: ['Bomb'], second: ['bomb', '  ', '!!'] });
    expect(matcher.size).toBe(1);
    expect(matcher.match('bomb')).toEqual([{ start: 0, end: 4, category: 'first', term: 'Bomb' }]);
  });

  describe('a term ending in * takes any ending of its last word', () => {
    it('Swedish: döda* and hota* match their inflected forms, whole words marked, not other words', () => {
      const matcher = compileSeedTerms({ threat: ['döda*', 'hota*'] });
      const text = 'Han hotar dem. De dödade tiden, DÖDAR inget; hotelse och hotell är andra ord. Döda!';
      expect(slices(text, matcher)).toEqual(['hotar', 'dödade', 'DÖDAR', 'Döda']);
      expect(matcher.match(text).map((m) => m.term)).toEqual(['hota*', 'döda*', 'döda*', 'döda*']);
    });

    it('German: droh* matches drohen, Drohung and drohte, not bedrohen (the stem is at the start of the word)', () => {
      const matcher = compileSeedTerms({ threat: ['droh*'] });
      expect(slices('Sie drohen. Eine Drohung! Er drohte, sie bedrohen niemanden.', matcher)).toEqual([
        'drohen',
        'Drohung',
        'drohte',
      ]);
    });

    it('Arabic: كتب* matches كتبت and كتبوا, not مكتب', () => {
      const matcher = compileSeedTerms({ x: ['كتب*'] });
      expect(slices('كتبت رسالة و كتبوا في مكتب', matcher)).toEqual(['كتبت', 'كتبوا']);
    });

    it('applies to the last word of a multi-word term, and a term without * wins at the same length', () => {
      const matcher = compileSeedTerms({ a: ['will hurt*'], b: ['hotar'], c: ['hota*'] });
      const text = 'I will hurting you; WILL HURT. hotar hotade';
      expect(matcher.match(text).map((m) => [text.slice(m.start, m.end), m.category])).toEqual([
        ['will hurting', 'a'],
        ['WILL HURT', 'a'],
        ['hotar', 'b'],
        ['hotade', 'c'],
      ]);
      expect(matcher.size).toBe(3);
    });

    it('refuses a single character before *, and the matcher reads such a stored term as the bare word', () => {
      expect(parseSeedTerm('x*').problem).toMatch(/single character/);
      expect(parseSeedTerm('döda *')).toEqual({ words: ['doda'], anyEnding: true });
      expect(parseSeedTerm('döda')).toEqual({ words: ['doda'], anyEnding: false });
      expect(slices('x xylophone', compileSeedTerms({ a: ['x*'] }))).toEqual(['x']);
    });
  });

  it('rejects bad arguments with a named error', () => {
    expect(() => compileSeedTerms(null as unknown as Record<string, string[]>)).toThrow(TypeError);
    expect(() => compileSeedTerms({ a: 'x' as unknown as string[] })).toThrow(/seedTerms\["a"\]/);
    expect(() => compileSeedTerms({ a: ['x'] }).match(3 as unknown as string)).toThrow(/text must be a string/);
  });
});

describe('checkSeedTerms', () => {
  it('cleans terms and names every problem with its category', () => {
    expect(checkSeedTerms({ threat: ['  hurt you ', 'hurt you', ''], ok: [] }, ['threat', 'ok'])).toEqual({
      seedTerms: { threat: ['hurt you'] },
      problems: [],
    });
    expect(checkSeedTerms(undefined, ['a'])).toEqual({ seedTerms: {}, problems: [] });
    const { problems } = checkSeedTerms({ menace: ['x'], threat: 'hurt', ok: ['k*', 'y'.repeat(101)] }, [
      'threat',
      'ok',
    ]);
    expect(problems).toEqual([
      'seedTerms.menace: not a category of this desk',
      'seedTerms.threat: expected a list of strings',
      `seedTerms.ok: a term is longer than 100 characters ("${'y'.repeat(20)}"…)`,
      'seedTerms.ok: "k*" ends in * after a single character; give at least 2 characters before *',
    ]);
    expect(checkSeedTerms(['hurt'], ['threat']).problems).toEqual([
      'seedTerms: expected an object mapping category names to lists of terms',
    ]);
  });
});

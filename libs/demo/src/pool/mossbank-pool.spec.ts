import { describe, expect, it } from 'vitest';
import { compileSeedTerms, createRng, normalizedTextHash } from '#learning';
import {
  DEMO_POOL_SIZE,
  generateMossbankPool,
  HARD_CASES,
  MOSSBANK_CATEGORIES,
  MOSSBANK_SEED_TERMS,
  mossbankNdjson,
  readingPauseMs,
  simulatedAnswer,
} from './index.js';

describe('generateMossbankPool', () => {
  const pool = generateMossbankPool();

  it('is deterministic: the same seed gives the same posts, another seed others', () => {
    expect(generateMossbankPool()).toEqual(pool);
    const other = generateMossbankPool({ seed: 11 });
    expect(other).toHaveLength(pool.length);
    expect(other.filter((p, i) => p.text === pool[i].text).length).toBeLessThan(10);
  });

  it('holds the default 3 200 posts with ids mossbank-00001… in posting order', () => {
    expect(DEMO_POOL_SIZE).toBeGreaterThanOrEqual(3000);
    expect(pool).toHaveLength(3200);
    expect(pool[0].externalId).toBe('mossbank-00001');
    expect(pool[3199].externalId).toBe('mossbank-03200');
    const times = pool.map((p) => Date.parse(p.postedAt));
    expect(times.every((t, i) => i === 0 || t >= times[i - 1])).toBe(true);
    // Spread over the eight invented weeks from 2 March 2026.
    expect(Math.min(...times)).toBeGreaterThanOrEqual(Date.UTC(2026, 2, 2));
    expect(Math.max(...times)).toBeLessThan(Date.UTC(2026, 2, 2 + 56));
    expect(new Set(pool.map((p) => p.postedAt.slice(0, 10))).size).toBeGreaterThan(50);
    expect(
      pool.every((p) => /^board\/[a-z-]+$/.test(p.source) && p.meta.thread.length > 0 && p.meta.author.length > 0),
    ).toBe(true);
  });

  it('keeps the shares of a reported-posts queue: threats about 8 %, harassment about 20 %', () => {
    const share = (c: string) => pool.filter((p) => p.category === c).length / pool.length;
    // Counts are rounded from the shares, so the tolerance is one post in either direction.
    expect(share('threat')).toBeCloseTo(0.08, 3);
    expect(share('harassment')).toBeCloseTo(0.2, 3);
    expect(share('ok')).toBeCloseTo(0.72, 3);
    // Other shares give other counts, within one post.
    const tilted = generateMossbankPool({ count: 1000, shares: { threat: 0.15, harassment: 0.25 } });
    expect(Math.abs(tilted.filter((p) => p.category === 'threat').length - 150)).toBeLessThanOrEqual(1);
  });

  it('has hard cases in every category, each of them common enough to learn from', () => {
    const hard = (c: string) => pool.filter((p) => p.category === c && p.hardCase !== null);
    for (const c of MOSSBANK_CATEGORIES) expect(hard(c).length, c).toBeGreaterThan(50);
    for (const h of HARD_CASES) expect(pool.filter((p) => p.hardCase === h).length, h).toBeGreaterThan(50);
    // Violent words used harmlessly are ok; threats come without violent words.
    const violent = /\b(kill|killed|killer|murder|murdered|die|destroyed|slayed|dead|smashed|blew)\b/i;
    expect(
      pool
        .filter((p) => p.hardCase === 'harmless-violent-words')
        .every((p) => p.category === 'ok' && violent.test(p.text)),
    ).toBe(true);
    expect(
      pool
        .filter((p) => p.hardCase === 'veiled-threat')
        .every((p) => p.category === 'threat' && !/\b(hurt|kill|hammer|break|ambulance)\b/i.test(p.text)),
    ).toBe(true);
    expect(pool.some((p) => /killed it/i.test(p.text) && p.category === 'ok')).toBe(true);
  });

  it('has no two posts with the same normalised text, so an import keeps all of them', () => {
    expect(new Set(pool.map((p) => normalizedTextHash(p.text))).size).toBe(pool.length);
  });

  it('varies length, casing, emoji and language', () => {
    // eslint-disable-next-line @typescript-eslint/no-misused-spread -- the length meant is in code points
    const lengths = pool.map((p) => [...p.text].length);
    expect(Math.min(...lengths)).toBeLessThan(40);
    expect(Math.max(...lengths)).toBeGreaterThan(180);
    expect(pool.some((p) => p.text === p.text.toUpperCase() && /[A-Z]/.test(p.text))).toBe(true);
    expect(pool.filter((p) => /\p{Extended_Pictographic}/u.test(p.text)).length).toBeGreaterThan(300);
    expect(pool.some((p) => /[\u0370-\u03ff]/.test(p.text))).toBe(true); // Greek
    expect(pool.some((p) => /[\u3040-\u30ff]/.test(p.text))).toBe(true); // Japanese kana
    expect(pool.some((p) => /[ąćęłńóśźż]/.test(p.text))).toBe(true); // Polish
  });

  it('has seed terms that help but are imperfect', () => {
    // The desk's own matcher, as the cold start and the highlighting use it.
    const matchers = Object.fromEntries(
      Object.entries(MOSSBANK_SEED_TERMS).map(([c, terms]) => [c, compileSeedTerms({ [c]: [...terms] })]),
    );
    const fires = (c: keyof typeof MOSSBANK_SEED_TERMS, text: string) => matchers[c].count(text) > 0;
    const threats = pool.filter((p) => p.category === 'threat');
    const hits = threats.filter((p) => fires('threat', p.text)).length;
    // Helpful: a good share of threats match; imperfect: not all, and harmless posts match too.
    expect(hits / threats.length).toBeGreaterThan(0.2);
    expect(hits).toBeLessThan(threats.length);
    expect(pool.some((p) => p.category === 'ok' && fires('threat', p.text))).toBe(true);
    const harassment = pool.filter((p) => p.category === 'harassment');
    const flagged = harassment.filter((p) => fires('harassment', p.text)).length;
    expect(flagged / harassment.length).toBeGreaterThan(0.2);
    expect(flagged).toBeLessThan(harassment.length);
  });

  it('never writes the hidden category into the import rows', () => {
    const rows = mossbankNdjson(pool.slice(0, 50))
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l) as Record<string, unknown>);
    expect(rows).toHaveLength(50);
    expect(Object.keys(rows[0]).sort()).toEqual(['author', 'created_at', 'external_id', 'source', 'text', 'thread']);
    expect(JSON.stringify(rows)).not.toMatch(/"(category|hardCase|label)"/);
  });

  it('refuses bad options', () => {
    expect(() => generateMossbankPool({ count: 10 })).toThrow(/count must be an integer from 100 to 20000, got 10/);
    expect(() => generateMossbankPool({ shares: { threat: 0.7, harassment: 0.5 } })).toThrow(/shares/);
  });
});

describe('simulatedAnswer', () => {
  const categories = ['threat', 'harassment', 'ok'];

  it('answers the truth except at the error and abstain rates', () => {
    const rng = createRng(5);
    const n = 20_000;
    let wrong = 0;
    let abstain = 0;
    for (let i = 0; i < n; i++) {
      const a = simulatedAnswer('harassment', categories, rng);
      if ('abstain' in a) abstain++;
      else if (a.category !== 'harassment') {
        wrong++;
        expect(categories).toContain(a.category);
      }
    }
    // Binomial(20 000, p) within 4 standard deviations (common practice, no source).
    const within = (x: number, p: number) => Math.abs(x - n * p) < 4 * Math.sqrt(n * p * (1 - p));
    expect(within(wrong, 0.05)).toBe(true);
    expect(within(abstain, 0.01)).toBe(true);
  });

  it('is reproducible and checks its arguments', () => {
    const run = () => {
      const r = createRng(9);
      return Array.from({ length: 50 }, () => simulatedAnswer('ok', categories, r));
    };
    expect(run()).toEqual(run());
    expect(() => simulatedAnswer('spam', categories, createRng(1))).toThrow(/truth "spam"/);
    expect(() => simulatedAnswer('ok', categories, createRng(1), { errorRate: 0.9, abstainRate: 0.2 })).toThrow(
      /sum to at most 1/,
    );
  });

  it('pauses between 200 and 600 ms', () => {
    const rng = createRng(3);
    const pauses = Array.from({ length: 1000 }, () => readingPauseMs(rng));
    expect(Math.min(...pauses)).toBeGreaterThanOrEqual(200);
    expect(Math.max(...pauses)).toBeLessThan(600);
    expect(() => readingPauseMs(rng, 500, 100)).toThrow(RangeError);
  });
});

import { describe, expect, it } from 'vitest';
import { periodStart } from '#models';
import { KeywordDayCounter, keywordFigures } from './keyword-days.js';

describe('periodStart', () => {
  it('starts weeks on Monday as ISO 8601 does, across month and year ends', () => {
    // ISO 8601 weeks start on Monday (week 1 holds the year's first Thursday): Friday 1 January 2021 lies in
    // week 53 of 2020, which began on Monday 28 December 2020.
    const at = (iso: string) => new Date(iso);
    expect(periodStart(at('2021-01-01T12:00:00Z'), 'week')).toBe('2020-12-28');
    expect(periodStart(at('2021-01-03T23:59:59Z'), 'week')).toBe('2020-12-28');
    expect(periodStart(at('2021-01-04T00:00:00Z'), 'week')).toBe('2021-01-04');
    expect(periodStart(at('2026-11-15T23:30:00Z'), 'week')).toBe('2026-11-09');
    expect(periodStart(at('2024-02-29T10:00:00Z'), 'month')).toBe('2024-02-01');
    expect(periodStart(at('2024-02-29T10:00:00Z'), 'day')).toBe('2024-02-29');
  });
});

describe('KeywordDayCounter and keywordFigures', () => {
  it('counts matches per category on UTC days, and leaves undated posts out of the posting dates only', () => {
    const counter = new KeywordDayCounter({ threat: ['hota*'], ok: [] }, ['threat', 'harassment', 'ok']);
    const imported = new Date('2026-11-20T10:00:00Z');
    counter.add({ text: 'hotar', postedAt: new Date('2026-11-02T23:59:59Z'), importedAt: imported });
    counter.add({ text: 'calm', postedAt: new Date('2026-11-03T00:00:00Z'), importedAt: imported });
    counter.add({ text: 'hotade', postedAt: null, importedAt: imported });
    const days = counter.result();
    expect(days).toEqual({
      categories: ['threat'],
      posted: { '2026-11-02': [1, 1], '2026-11-03': [1, 0] },
      imported: { '2026-11-20': [3, 2] },
      undated: 1,
    });
    const draws = [{ text: 'hotar', label: 'ok', postedAt: new Date('2026-11-02T12:00:00Z'), importedAt: imported }];
    const { periods, total } = keywordFigures(days, { threat: ['hota*'] }, draws, 'week', 'posted');
    expect(periods).toHaveLength(1);
    expect(periods[0]).toMatchObject({ start: '2026-11-02', items: 2, randomVerdicts: 1 });
    expect(total.perCategory.threat.precision).toMatchObject({ estimate: 0, n: 1 });
    expect(total.perCategory.threat.recall).toEqual({ estimate: null, lower: 0, upper: 1, n: 0 });
  });
});

import { describe, expect, it } from 'vitest';
import { parseIsoDateTime } from './iso-date.js';

const iso = (value: string): string | null => parseIsoDateTime(value)?.toISOString() ?? null;

describe('parseIsoDateTime', () => {
  it('reads dates and date-times with and without offsets', () => {
    expect(iso('2024-02-29')).toBe('2024-02-29T00:00:00.000Z');
    expect(iso('2024-05-06T07:08')).toBe('2024-05-06T07:08:00.000Z');
    expect(iso('2024-05-06 07:08:09')).toBe('2024-05-06T07:08:09.000Z');
    expect(iso('2024-05-06T07:08:09Z')).toBe('2024-05-06T07:08:09.000Z');
    expect(iso('2024-05-06t07:08:09z')).toBe('2024-05-06T07:08:09.000Z');
    expect(iso('2024-05-06T07:08:09.123456+02:00')).toBe('2024-05-06T05:08:09.123Z');
    expect(iso('2024-05-06T07:08:09,5-0530')).toBe('2024-05-06T12:38:09.500Z');
    expect(iso('2024-05-06T23:30:00-01')).toBe('2024-05-07T00:30:00.000Z');
    expect(iso('0099-01-01')).toBe('0099-01-01T00:00:00.000Z');
  });

  it.each([
    '2023-02-29',
    '2024-04-31',
    '2024-13-01',
    '2024-00-10',
    '2024-05-06T24:00',
    '2024-05-06T07:60',
    '2024-05-06T07:08:60Z',
    '2024-05-06T07:08+24:00',
    '06/05/2024',
    '2024-5-6',
    '2024-05-06T',
    '2024-05-06Z',
    'May 6, 2024',
    '1715000000',
    ' 2024-05-06',
    '',
  ])('rejects %j', (value) => {
    expect(parseIsoDateTime(value)).toBeNull();
  });
});

import { describe, expect, it } from 'vitest';
import { canonicalJson, canonicalValue } from './canonical-json.js';

describe('canonicalJson', () => {
  it('gives the same bytes whatever order the keys were set in', () => {
    const a = { b: 1, a: { y: [1, 2], x: 'text' } };
    const b = { a: { x: 'text', y: [1, 2] }, b: 1 };
    expect(canonicalJson(a)).toBe(canonicalJson(b));
    expect(canonicalJson(a)).toBe(
      '{\n  "a": {\n    "x": "text",\n    "y": [\n      1,\n      2\n    ]\n  },\n  "b": 1\n}\n',
    );
  });

  it('rounds numbers to six places, turns −0 into 0 and non-finite numbers into null', () => {
    expect(
      canonicalValue({ p: 0.1 + 0.2, q: 2 / 3, z: -0, tiny: -1e-9, nan: Number.NaN, inf: Infinity, n: 12 }),
    ).toEqual({ inf: null, n: 12, nan: null, p: 0.3, q: 0.666667, tiny: 0, z: 0 });
    expect(Object.is((canonicalValue({ t: -1e-9 }) as { t: number }).t, 0)).toBe(true);
  });

  it('writes dates as ISO 8601 and drops undefined members', () => {
    expect(
      canonicalValue({ at: new Date(Date.UTC(2026, 0, 2, 3, 4, 5, 6)), gone: undefined, list: [undefined] }),
    ).toEqual({ at: '2026-01-02T03:04:05.006Z', list: [null] });
  });

  it('refuses values JSON cannot hold, and a bad number of places', () => {
    expect(() => canonicalValue({ f: () => 1 })).toThrow(TypeError);
    expect(() => canonicalValue(1, 13)).toThrow(/decimals must be an integer in 0…12, got 13/);
  });
});

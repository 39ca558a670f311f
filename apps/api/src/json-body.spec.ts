import { describe, expect, it } from 'vitest';
import { jsonLimitProblem, PUBLIC_LIMITS, SIGNED_IN_LIMITS } from './json-body.js';

const bytes = (s: string) => Buffer.from(s, 'utf8');

describe('jsonLimitProblem', () => {
  it('lets ordinary bodies through', () => {
    expect(jsonLimitProblem(bytes('{"name":"rowan","password":"a long passphrase"}'), PUBLIC_LIMITS)).toBeNull();
    const desk = {
      name: 'd',
      categories: ['a', 'b'],
      seedTerms: { a: Array.from({ length: 200 }, (_, i) => `t${i}`) },
    };
    expect(jsonLimitProblem(bytes(JSON.stringify(desk)), SIGNED_IN_LIMITS)).toBeNull();
  });

  it('refuses nesting deeper than the limit, counting objects and arrays alike', () => {
    const deep = (n: number) => '['.repeat(n) + ']'.repeat(n);
    expect(jsonLimitProblem(bytes(deep(16)), SIGNED_IN_LIMITS)).toBeNull();
    expect(jsonLimitProblem(bytes(deep(17)), SIGNED_IN_LIMITS)).toMatch(/nested deeper than 16 levels/);
    expect(jsonLimitProblem(bytes(`{"x":${'{"a":'.repeat(3000)}1${'}'.repeat(3000)}}`), PUBLIC_LIMITS)).toMatch(
      /deeper than 4/,
    );
  });

  it('refuses too many members, and ignores brackets, commas and colons inside strings', () => {
    expect(jsonLimitProblem(bytes(JSON.stringify({ a: Array(51).fill(0) })), PUBLIC_LIMITS)).toMatch(/more than 50/);
    const tricky = JSON.stringify({ text: '[[[[[[{{{{{{,,,,::::"\\' + ',:'.repeat(500) });
    expect(jsonLimitProblem(bytes(tricky), PUBLIC_LIMITS)).toBeNull();
  });
});

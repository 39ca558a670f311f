import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { rankedSourcePasswords } from './generate-common-passwords.js';
import { passwordProblem } from './password-policy.js';
import { selectCommonPasswords } from './select-common-passwords.js';

// NIST SP 800-63B (2017, updated 2020), section 5.1.1.2, memorized secret verifiers.
describe('passwordProblem (NIST SP 800-63B, 5.1.1.2)', () => {
  it('refuses fewer than 8 characters, counted as code points', () => {
    expect(passwordProblem('short')).toMatch(/at least 8 characters \(got 5\)/);
    // Four characters outside the Basic Multilingual Plane are four characters, not eight UTF-16 units.
    expect(passwordProblem('😀😁😂🤣')).toMatch(/got 4/);
  });

  it('refuses common passwords, whatever their case', () => {
    expect(passwordProblem('12345678')).not.toBeNull();
    expect(passwordProblem('password')).toMatch(/most common/);
    expect(passwordProblem('PassWord')).toMatch(/most common/);
    expect(passwordProblem('sunshine')).toMatch(/most common/);
  });

  it('refuses repeated and sequential characters, eight spaces among them', () => {
    expect(passwordProblem('        ')).toMatch(/repeated/);
    expect(passwordProblem('aaaaaaaaaa')).toMatch(/repeated/);
    expect(passwordProblem('abcdefghij')).toMatch(/consecutive/);
    expect(passwordProblem('98765432')).not.toBeNull();
  });

  it("refuses the service's name and the account's own name with a little padding", () => {
    expect(passwordProblem('cribra2026')).toMatch(/service/);
    expect(passwordProblem('rowanrowan1', { userName: 'rowan' })).toMatch(/account name/);
  });

  it('accepts long passphrases and passwords of any characters, with no composition rules', () => {
    expect(passwordProblem('correct horse battery staple')).toBeNull();
    expect(passwordProblem('all lower case words here')).toBeNull();
    expect(passwordProblem('ünïcødé pässwörd')).toBeNull();
    expect(passwordProblem('rowan walks the moss', { userName: 'rowan' })).toBeNull();
  });
});

describe('the shipped common-password list', () => {
  it('is what the generator makes from @zxcvbn-ts/language-common', () => {
    const shipped = JSON.parse(readFileSync(new URL('common-passwords.json', import.meta.url), 'utf8')) as string[];
    expect(shipped).toEqual(selectCommonPasswords(rankedSourcePasswords()));
    expect(shipped.length).toBeGreaterThan(10_000);
    expect(new Set(shipped).size).toBe(shipped.length);
  });
});

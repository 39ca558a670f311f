import { describe, expect, it } from 'vitest';
import { csvField, csvLine } from './csv.js';

// RFC 4180, section 2, rules 5–7: fields with commas, quotes or line breaks are quoted; quotes inside are doubled.
describe('csvField and csvLine (RFC 4180)', () => {
  it('leaves plain fields as they are and quotes the ones that need it', () => {
    expect(csvField('plain')).toBe('plain');
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField('two\nlines')).toBe('"two\nlines"');
    expect(csvField('cr\rhere')).toBe('"cr\rhere"');
    expect(csvField(null)).toBe('');
    expect(csvField(undefined)).toBe('');
    expect(csvField(0.25)).toBe('0.25');
    expect(csvField(false)).toBe('false');
    expect(csvField(['a', 'b'])).toBe('"[""a"",""b""]"');
  });

  it('ends each record with CRLF (rule 1)', () => {
    expect(csvLine(['a', 'b,c', null])).toBe('a,"b,c",\r\n');
  });
});

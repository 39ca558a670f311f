import { describe, expect, it } from 'vitest';
import { csvField, csvLine, RAW } from './csv.js';
import { csvRequest } from './csv-query.js';

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

// OWASP, "CSV Injection": no cell may begin with = + - @ tab or carriage return; prefix an apostrophe and quote.
describe('spreadsheet-safe fields (OWASP CSV injection guidance)', () => {
  it('prefixes every formula-leading text with an apostrophe and quotes it', () => {
    expect(csvField('=HYPERLINK("http://x.example","open")')).toBe('"\'=HYPERLINK(""http://x.example"",""open"")"');
    expect(csvField('+1+1')).toBe('"\'+1+1"');
    expect(csvField('-2+3')).toBe('"\'-2+3"');
    expect(csvField('@SUM(A1)')).toBe('"\'@SUM(A1)"');
    expect(csvField('\t=1')).toBe('"\'\t=1"');
    expect(csvField('\r=1')).toBe('"\'\r=1"');
  });

  it('leaves text that does not begin with a formula character alone, and numbers as numbers', () => {
    expect(csvField('a = b')).toBe('a = b');
    expect(csvField("don't")).toBe("don't");
    expect(csvField(-0.5)).toBe('-0.5');
    expect(csvField(['=x'])).toBe('"[""=x""]"');
  });

  it('quotes a semicolon or a tab, where a spreadsheet set to that separator would start a cell', () => {
    expect(csvField('a;=1+1')).toBe('"a;=1+1"');
    expect(csvField('a\t=1+1')).toBe('"a\t=1+1"');
  });

  it('writes values exactly as stored when asked for raw output', () => {
    expect(csvField('=1+1', RAW)).toBe('=1+1');
    expect(csvField('-x,y', RAW)).toBe('"-x,y"');
    expect(csvLine(['@a', 2], RAW)).toBe('@a,2\r\n');
  });
});

describe('csvRequest', () => {
  it('reads raw and bom as 1/0/true/false and refuses anything else', () => {
    expect(csvRequest({})).toEqual({ options: { neutralise: true }, bom: false });
    expect(csvRequest({ raw: '1', bom: 'true' })).toEqual({ options: { neutralise: false }, bom: true });
    expect(csvRequest({ raw: '0', bom: 'false' })).toEqual({ options: { neutralise: true }, bom: false });
    expect(() => csvRequest({ raw: 'yes' })).toThrow(/raw: expected 1 or 0/);
    expect(() => csvRequest({ bom: ['1', '1'] })).toThrow(/bom: expected 1 or 0/);
  });
});

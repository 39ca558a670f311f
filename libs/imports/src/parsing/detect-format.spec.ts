import { describe, expect, it } from 'vitest';
import { detectImportFormat } from './detect-format.js';

describe('detectImportFormat', () => {
  it('recognises each media type, ignoring parameters and case', () => {
    expect(detectImportFormat('application/x-ndjson')).toBe('ndjson');
    expect(detectImportFormat('application/jsonl')).toBe('ndjson');
    expect(detectImportFormat('text/csv; charset=utf-8')).toBe('csv');
    expect(detectImportFormat('Text/CSV;Charset="UTF-8"')).toBe('csv');
    expect(detectImportFormat('text/csv; header=present')).toBe('csv');
    expect(detectImportFormat('application/json;charset=utf8')).toBe('json');
    expect(detectImportFormat('application/json; charset=us-ascii')).toBe('json');
  });

  it('lets a known media type win over the file name', () => {
    expect(detectImportFormat('text/csv', 'items.json')).toBe('csv');
  });

  it('falls back to the extension for missing, generic or unknown media types', () => {
    expect(detectImportFormat(undefined, 'items.csv')).toBe('csv');
    expect(detectImportFormat('', 'items.NDJSON')).toBe('ndjson');
    expect(detectImportFormat('application/octet-stream', 'export.jsonl')).toBe('ndjson');
    expect(detectImportFormat('application/vnd.ms-excel', 'C:\\Users\\me\\reports.csv')).toBe('csv');
    expect(detectImportFormat('text/plain', 'dir/items.json')).toBe('json');
  });

  it('returns null when neither tells', () => {
    expect(detectImportFormat(undefined)).toBeNull();
    expect(detectImportFormat('application/xml')).toBeNull();
    expect(detectImportFormat('application/octet-stream', 'items.txt')).toBeNull();
    expect(detectImportFormat(undefined, '.csv')).toBeNull();
    expect(detectImportFormat(undefined, 'csv')).toBeNull();
  });

  it('refuses charsets other than UTF-8', () => {
    expect(detectImportFormat('text/csv; charset=iso-8859-1')).toBeNull();
    expect(detectImportFormat('application/json; charset=utf-16', 'items.json')).toBeNull();
  });
});

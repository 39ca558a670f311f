import { describe, expect, it } from 'vitest';
import { ImportFileError, type ParseOptions } from './import-record.js';
import { concatBytes, outline, parseAll, parseUntilError as untilError } from './parsing.test-support.js';

const parse = (input: string | Uint8Array, options?: ParseOptions) => parseAll(input, 'csv', options);
const parseUntilError = (input: string | Uint8Array) => untilError(input, 'csv');

function fileError(message: string, row: number): ImportFileError {
  return new ImportFileError(message, row);
}

const SAMPLE = [
  'text,external_id,source,created_at,lang', // 1
  'hello,e1,forum,2024-05-06,en', // 2
  '"multi', // 3: RFC 4180 §2.6, a quoted field holding a line break
  'line ""quoted"", text",e2,,,fr', // 4: RFC 4180 §2.7, "" is one quote
  'short,row', // 5
  '', // 6
  '"bad"x,e3,,,en', // 7
  ',e4,,,en', // 8
  '"   ",e5,,,en', // 9
  'ok,e6,,not-a-date,en', // 10
  '12" vinyl,e7,,,en', // 11
  'last,e8,,2024-05-06T07:08:09+02:00,', // 12, no final line break
].join('\n');

const SAMPLE_OUTLINE: [number, string][] = [
  [2, 'hello'],
  [3, 'multi\nline "quoted", text'],
  [5, '! malformed CSV: the row has 2 fields, the header has 5'],
  [
    7,
    "! malformed CSV: in column 'text', the closing quote is followed by a character other than a comma or a line break (RFC 4180 §2.7)",
  ],
  [8, '! empty text'],
  [9, '! empty text'],
  [10, "! 'created_at' is not an ISO 8601 date or date-time: 'not-a-date'"],
  [11, '12" vinyl'],
  [12, 'last'],
];

describe('parseImport — CSV', () => {
  it('numbers rows by the line they start on and rejects each bad row with its reason', async () => {
    expect(outline(await parse(SAMPLE))).toEqual(SAMPLE_OUTLINE);
  });

  it('fills the recognised fields and keeps other columns as string metadata', async () => {
    const rows = await parse(SAMPLE);
    const fields = rows.flatMap((r) =>
      r.ok ? [[r.record.externalId, r.record.source, r.record.createdAt?.toISOString() ?? null, r.record.meta]] : [],
    );
    expect(fields).toEqual([
      ['e1', 'forum', '2024-05-06T00:00:00.000Z', { lang: 'en' }],
      ['e2', null, null, { lang: 'fr' }],
      ['e7', null, null, { lang: 'en' }],
      ['e8', null, '2024-05-06T05:08:09.000Z', { lang: '' }],
    ]);
  });

  it('reads CRLF files the same way and keeps CRLF inside quoted fields as received', async () => {
    const crlf = `${SAMPLE.split('\n').join('\r\n')}\r\n`;
    const expected = SAMPLE_OUTLINE.map(([row, text]): [number, string] => [row, text.replace('multi\n', 'multi\r\n')]);
    expect(outline(await parse(crlf))).toEqual(expected);
  });

  it('accepts a lone CR as a line break', async () => {
    expect(outline(await parse('text,n\ra,1\r"b\rc",2\rd,3'))).toEqual([
      [2, 'a'],
      [3, 'b\rc'],
      [5, 'd'],
    ]);
  });

  it('keeps texts exactly as received, commas and surrounding spaces included (RFC 4180 §2.4, §2.6)', async () => {
    expect(outline(await parse('text\n"a, b"\n  padded  \n""""\n'))).toEqual([
      [2, 'a, b'],
      [3, '  padded  '],
      [4, '"'],
    ]);
  });

  it('strips a byte order mark before the header', async () => {
    expect(outline(await parse(concatBytes([[0xef, 0xbb, 0xbf], 'text\nhello\n'])))).toEqual([[2, 'hello']]);
  });

  it('trims spaces around header names and accepts the externalId spelling', async () => {
    const rows = await parse('text , externalId\nhello,7\n');
    expect(rows.map((r) => r.ok && [r.record.text, r.record.externalId])).toEqual([['hello', '7']]);
  });

  it('rejects exactly the rows with invalid UTF-8, naming the column, and accepts a genuine U+FFFD', async () => {
    const input = concatBytes([
      'text,note\nok,1\ncaf',
      [0xc3],
      ',2\n"\uFFFD kept",3\nfine,"multi\nline ',
      [0xff],
      '"\nend,4\n',
    ]);
    expect(outline(await parse(input))).toEqual([
      [2, 'ok'],
      [3, "! invalid UTF-8 in column 'text' (byte 0xc3 at offset 3 of the field)"],
      [4, '\uFFFD kept'],
      [5, "! invalid UTF-8 in column 'note' (byte 0xff at offset 11 of the field)"],
      [7, 'end'],
    ]);
  });

  it('rejects a row over the row cap and still counts the lines it spans', async () => {
    const big = `"${'x'.repeat(60)}\n${'y'.repeat(60)}"`;
    const rows = await parse(`text,n\na,1\n${big},2\nb,3\n`, { maxRowBytes: 50 });
    expect(outline(rows)).toEqual([
      [2, 'a'],
      [3, '! row is 125 bytes, over the limit of 50 bytes'], // 123 for the quoted field, 2 for ",2"
      [5, 'b'],
    ]);
  });

  it('treats a meta column as ordinary string metadata', async () => {
    const rows = await parse('text,meta,Meta\nhello,"{""a"":1}",x\n');
    expect(rows.map((r) => r.ok && r.record.meta)).toEqual([{ meta: '{"a":1}', Meta: 'x' }]);
  });

  it('yields no rows for a header alone', async () => {
    expect(await parse('text,source\r\n')).toEqual([]);
  });

  describe('file-level errors', () => {
    it.each([
      ['an empty file', '', "the file is empty: a CSV import needs a header row with a 'text' column", 1],
      ['only blank lines', '\n\r\n', "the file is empty: a CSV import needs a header row with a 'text' column", 1],
      ['no text column', 'body,source\nhello,x\n', "the header has no 'text' column (columns: 'body', 'source')", 1],
      [
        'a reserved column',
        'text,priority\nhello,1\n',
        "header: column 'priority' is reserved (the service sets 'priority' itself); rename it",
        1,
      ],
      [
        'a reserved column in another spelling',
        'text,Desk-ID\n',
        "header: column 'Desk-ID' is reserved (the service sets 'desk_id' itself); rename it",
        1,
      ],
      [
        'a case variant of a recognised column',
        'text,Text\n',
        "header: column 'Text' differs from the recognised column 'text' only in case or punctuation; rename it to 'text'",
        1,
      ],
      [
        'a case variant alone',
        'Text\nhello\n',
        "header: column 'Text' differs from the recognised column 'text' only in case or punctuation; rename it to 'text'",
        1,
      ],
      ['a duplicated column', 'text,lang,lang\n', "header: column 'lang' appears twice (columns 2 and 3)", 1],
      [
        'two spellings of one field',
        'text,external_id,externalId\n',
        "header: both 'external_id' and 'externalId' are given; keep one",
        1,
      ],
      ['an empty column name', 'text,,lang\n', 'header column 2 has an empty name', 1],
      ['a header after blank lines', '\n\nbody\n', "the header has no 'text' column (columns: 'body')", 3],
      [
        'a malformed header',
        '"text"x\n',
        'header row: malformed CSV: in column 1, the closing quote is followed by a character other than a comma or a line break (RFC 4180 §2.7)',
        1,
      ],
    ])('fails on %s', async (_name, input, message, row) => {
      const { rows, error } = await parseUntilError(input);
      expect(rows).toEqual([]);
      expect(error).toEqual(fileError(message, row));
      expect((error as ImportFileError).row).toBe(row);
    });

    it('fails on invalid UTF-8 in the header', async () => {
      const { error } = await parseUntilError(concatBytes(['text,la', [0xff], '\n']));
      expect(error).toEqual(
        fileError('invalid UTF-8 in header column 2 (byte 0xff at offset 2 of the column name)', 1),
      );
    });

    it('fails on a quote that is never closed, after yielding the rows before it', async () => {
      const { rows, error } = await parseUntilError('text,n\nok,1\n"a\nb","open\nmore,2\n');
      expect(outline(rows)).toEqual([[2, 'ok']]);
      expect(error).toBeInstanceOf(ImportFileError);
      expect(error).toEqual(
        fileError(
          'malformed CSV: the quoted field opened on line 4 is never closed, so the end of the row cannot be found',
          3,
        ),
      );
      expect((error as ImportFileError).row).toBe(3);
    });
  });
});

import { describe, expect, it } from 'vitest';
import { ImportFileError, type ParseOptions } from './import-record.js';
import { concatBytes, jsonErrorOf, outline, parseUntilError as untilError } from './parsing.test-support.js';

const parseUntilError = (input: string | Uint8Array, options?: ParseOptions) => untilError(input, 'json', options);

describe('parseImport — JSON array', () => {
  it('splits elements correctly around brackets, commas and escapes inside strings', async () => {
    const body =
      ' [\n {"text":"a","externalId":7,"meta":{"k":[1,{"x":"]"}]}},\r\n\t{"text":"b\\"],{\\\\","source":"s"} ]\n';
    const { rows, error } = await parseUntilError(body);
    expect(error).toBeNull();
    expect(
      rows.map((r) => r.ok && [r.record.row, r.record.text, r.record.externalId, r.record.source, r.record.meta]),
    ).toEqual([
      [1, 'a', '7', null, { k: [1, { x: ']' }] }],
      [2, 'b"],{\\', null, 's', {}],
    ]);
  });

  it('yields nothing for an empty array', async () => {
    expect(await parseUntilError(' [ ] ')).toEqual({ rows: [], error: null });
  });

  it('rejects each bad element by its index and keeps the others', async () => {
    const elements = [
      '{"text":"one"}', // 1
      '{bad}', // 2
      '3', // 3
      '[{"text":"nested"}]', // 4
      '"text"', // 5
      '', // 6: two commas in a row
      '{"text":""}', // 7
      '{"text":"x","verdict":"ok"}', // 8
      '{"text":"a"}}', // 9: stray closer
      '{"text":"last"}', // 10
    ];
    const { rows, error } = await parseUntilError(`[${elements.join(',')}]`);
    expect(error).toBeNull();
    expect(outline(rows)).toEqual([
      [1, 'one'],
      [2, `! malformed JSON: ${jsonErrorOf('{bad}')}`],
      [3, '! expected a JSON object, got a number'],
      [4, '! expected a JSON object, got an array'],
      [5, '! expected a JSON object, got a string'],
      [6, '! missing array element (an extra comma)'],
      [7, '! empty text'],
      [8, "! key 'verdict' is reserved (the service sets 'verdict' itself); rename it"],
      [9, `! malformed JSON: ${jsonErrorOf('{"text":"a"}}')}`],
      [10, 'last'],
    ]);
  });

  it('reports a trailing comma as a missing last element', async () => {
    const { rows, error } = await parseUntilError('[{"text":"a"},\n]');
    expect(error).toBeNull();
    expect(outline(rows)).toEqual([
      [1, 'a'],
      [2, '! missing array element (an extra comma)'],
    ]);
  });

  it('rejects exactly the element with invalid UTF-8 and accepts a genuine U+FFFD', async () => {
    const body = concatBytes(['[{"text":"a"},{"text":"b', [0xe2, 0x82], '"},{"text":"\uFFFD"},{"text":"\\ufffd"}]']);
    const { rows, error } = await parseUntilError(body);
    expect(error).toBeNull();
    expect(outline(rows)).toEqual([
      [1, 'a'],
      [2, '! invalid UTF-8 (byte 0xe2 at offset 10 of the element)'],
      [3, '\uFFFD'],
      [4, '\uFFFD'],
    ]);
  });

  it('rejects an element over the row cap and keeps reading', async () => {
    const big = `{"text":"${'x'.repeat(100)}","meta":{"a":[1,2,{"b":"]]"}]}}`;
    const { rows, error } = await parseUntilError(`[{"text":"a"},${big},{"text":"b"}]`, { maxRowBytes: 64 });
    expect(error).toBeNull();
    expect(outline(rows)).toEqual([
      [1, 'a'],
      [2, `! element is ${big.length} bytes, over the limit of 64 bytes`],
      [3, 'b'],
    ]);
  });

  it('strips a byte order mark before the array', async () => {
    const { rows } = await parseUntilError(concatBytes([[0xef, 0xbb, 0xbf], '[{"text":"a"}]']));
    expect(outline(rows)).toEqual([[1, 'a']]);
  });

  describe('file-level errors', () => {
    it.each([
      ['an empty body', '', 'the body is empty: expected a JSON array', 0],
      ['a whitespace-only body', ' \r\n\t', 'the body is empty: expected a JSON array', 0],
      ['a single object', '{"text":"a"}', "the body is not a JSON array: it starts with '{', not '['", 0],
      ['NDJSON sent as JSON', '\n"text"\n', "the body is not a JSON array: it starts with '\"', not '['", 0],
      [
        'a body starting with a non-ASCII byte',
        '\u00E9',
        "the body is not a JSON array: it starts with byte 0xc3, not '['",
        0,
      ],
    ])('fails on %s', async (_name, body, message, row) => {
      const { rows, error } = await parseUntilError(body);
      expect(rows).toEqual([]);
      expect(error).toEqual(new ImportFileError(message, row));
      expect((error as ImportFileError).row).toBe(row);
    });

    it('fails on an array that is never closed, after the elements before it', async () => {
      const inside = await parseUntilError('[{"text":"a"},{"text":"b"');
      expect(outline(inside.rows)).toEqual([[1, 'a']]);
      expect(inside.error).toEqual(
        new ImportFileError('the JSON array is not closed: the body ends inside element 2', 2),
      );
      expect((inside.error as ImportFileError).row).toBe(2);

      const after = await parseUntilError('[{"text":"a"},  ');
      expect(outline(after.rows)).toEqual([[1, 'a']]);
      expect(after.error).toEqual(
        new ImportFileError('the JSON array is not closed: the body ends before element 2', 2),
      );
    });

    it('fails on data after the array, after its elements', async () => {
      const { rows, error } = await parseUntilError('[{"text":"a"}]\n[{"text":"b"}]');
      expect(outline(rows)).toEqual([[1, 'a']]);
      expect(error).toEqual(new ImportFileError("unexpected '[' after the closing ']' of the JSON array", 0));
    });
  });
});

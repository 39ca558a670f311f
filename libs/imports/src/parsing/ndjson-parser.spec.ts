import { describe, expect, it } from 'vitest';
import type { ParseOptions } from './import-record.js';
import { concatBytes, jsonErrorOf, outline, parseAll } from './parsing.test-support.js';

const parse = (input: string | Uint8Array, options?: ParseOptions) => parseAll(input, 'ndjson', options);

describe('parseImport — NDJSON', () => {
  it('reads a full record with every recognised field, keeping other keys as metadata', async () => {
    const rows = await parse(
      '{"text":"  First ","external_id":"e1","source":"forum","created_at":"2024-05-06T07:08:09Z","lang":"en","meta":{"score":0.5,"tags":["a"]}}\n',
    );
    expect(rows).toEqual([
      {
        ok: true,
        record: {
          row: 1,
          text: '  First ',
          externalId: 'e1',
          source: 'forum',
          createdAt: new Date('2024-05-06T07:08:09.000Z'),
          meta: { lang: 'en', score: 0.5, tags: ['a'] },
          normalizedText: 'first',
          // sha256sum of the bytes "first".
          textHash: 'a7937b64b8caa58f03721bb6bacf5c78cb235febe0e70b1b84cd99541461a08e',
        },
      },
    ]);
  });

  it('accepts externalId and createdAt spellings, integer ids and null for optional fields', async () => {
    const rows = await parse(
      '{"text":"a","externalId":12345,"createdAt":null,"source":null}\n{"text":"b","external_id":"","source":""}',
    );
    expect(
      rows.map((r) => (r.ok ? [r.record.externalId, r.record.source, r.record.createdAt] : r.rejected.reason)),
    ).toEqual([
      ['12345', null, null],
      [null, null, null],
    ]);
  });

  it('rejects each bad line with its line number and reason, counting blank lines', async () => {
    const lines = [
      '{"text":"fine"}', // 1
      '', // 2 (blank, skipped)
      '{"text":""}', // 3
      '{"text":"  \\t \\n "}', // 4
      '{"text":42}', // 5
      '{"source":"x"}', // 6
      '{"text":"abcdefghijk"}', // 7: 11 code points, limit 10
      '{bad json', // 8
      '[1,2]', // 9
      '"just a string"', // 10
      '{"text":"x","desk_id":"d"}', // 11
      '{"text":"x","Text":"y"}', // 12
      '{"text":"x","external_id":"a","externalId":"b"}', // 13
      '{"text":"x","external_id":1.5}', // 14
      '{"text":"x","external_id":12345678901234567890}', // 15
      '{"text":"x","external_id":true}', // 16
      '{"text":"x","created_at":"2024-02-30"}', // 17
      '{"text":"x","created_at":1715000000}', // 18
      '{"text":"x","meta":[1]}', // 19
      '{"text":"x","lang":"en","meta":{"lang":"fr"}}', // 20
      '{"text":"a\\u0000b"}', // 21
      '{"text":"\\ud800"}', // 22
      '{"text":"x","source":5}', // 23
      '   ', // 24 (blank)
      'null', // 25
      '{"text":"x","ITEM-ID":1}', // 26
      '{"text":"x","":1}', // 27
      '{"text":"x","note":"a\\u0000"}', // 28
      '{"text":"last"}', // 29
    ];
    const rows = await parse(lines.join('\n'), { maxTextLength: 10 });
    expect(outline(rows)).toEqual([
      [1, 'fine'],
      [3, '! empty text'],
      [4, '! empty text'],
      [5, "! 'text' must be a string, got a number"],
      [6, "! missing 'text'"],
      [7, '! text is 11 characters long, over the limit of 10 (counted in Unicode code points)'],
      [8, `! malformed JSON: ${jsonErrorOf('{bad json')}`],
      [9, '! expected a JSON object, got an array'],
      [10, '! expected a JSON object, got a string'],
      [11, "! key 'desk_id' is reserved (the service sets 'desk_id' itself); rename it"],
      [12, "! key 'Text' differs from the recognised key 'text' only in case or punctuation; rename it to 'text'"],
      [13, "! both 'external_id' and 'externalId' are given; keep one"],
      [14, "! 'external_id' 1.5 is not an integer that can be read exactly; send it as a string"],
      [15, "! 'external_id' 12345678901234567000 is not an integer that can be read exactly; send it as a string"],
      [16, "! 'external_id' must be a string or an integer, got a boolean"],
      [17, "! 'created_at' is not an ISO 8601 date or date-time: '2024-02-30'"],
      [18, "! 'created_at' must be an ISO 8601 date-time string, got a number"],
      [19, "! 'meta' must be an object, got an array"],
      [20, "! 'lang' is given both as a key and inside 'meta'"],
      [21, '! text contains a NUL character (U+0000), which cannot be stored'],
      [22, '! text contains an unpaired UTF-16 surrogate, which is not valid Unicode'],
      [23, "! 'source' must be a string, got a number"],
      [25, '! expected a JSON object, got null'],
      [26, "! key 'ITEM-ID' is reserved (the service sets 'item_id' itself); rename it"],
      [27, '! a key has an empty name'],
      [28, "! metadata 'meta.note' contains a NUL character (U+0000), which cannot be stored"],
      [29, 'last'],
    ]);
  });

  it('limits external_id and source to 1000 code points and accepts a null meta', async () => {
    const rows = await parse(
      [
        `{"text":"a","external_id":"${'i'.repeat(1000)}","source":"${'😀'.repeat(1000)}","meta":null}`,
        `{"text":"b","external_id":"${'i'.repeat(1001)}"}`,
        `{"text":"c","source":"${'s'.repeat(1001)}"}`,
      ].join('\n'),
    );
    expect(outline(rows)).toEqual([
      [1, 'a'],
      [2, "! 'external_id' is 1001 characters long, over the limit of 1000"],
      [3, "! 'source' is 1001 characters long, over the limit of 1000"],
    ]);
  });

  it('counts the text limit in code points, so an emoji counts once', async () => {
    const rows = await parse('{"text":"😀😀😀"}\n{"text":"😀😀😀😀"}\n', { maxTextLength: 3 });
    expect(outline(rows)).toEqual([
      [1, '😀😀😀'],
      [2, '! text is 4 characters long, over the limit of 3 (counted in Unicode code points)'],
    ]);
  });

  it('applies the default text limit of 100 000 code points', async () => {
    const rows = await parse(`{"text":"${'a'.repeat(100_000)}"}\n{"text":"${'a'.repeat(100_001)}"}\n`);
    expect(rows.map((r) => (r.ok ? r.record.text.length : r.rejected.reason))).toEqual([
      100_000,
      'text is 100001 characters long, over the limit of 100000 (counted in Unicode code points)',
    ]);
  });

  it('rejects metadata over the size limit and nested too deeply', async () => {
    const deep = `${'{"a":'.repeat(40)}1${'}'.repeat(40)}`;
    const rows = await parse(
      `{"text":"x","blob":"${'b'.repeat(100)}"}\n{"text":"y","blob":"${'b'.repeat(80)}"}\n{"text":"z","deep":${deep}}\n`,
      {
        maxMetaBytes: 100,
      },
    );
    expect(outline(rows)).toEqual([
      [1, '! metadata is 111 bytes as JSON, over the limit of 100'],
      [2, 'y'],
      [3, '! metadata is nested more than 32 levels deep'],
    ]);
  });

  it('keeps a metadata key named __proto__ as an ordinary key', async () => {
    const [row] = await parse('{"text":"x","__proto__":{"polluted":true}}');
    expect(row.ok && Object.getPrototypeOf(row.record.meta)).toBe(Object.prototype);
    expect(row.ok && Object.keys(row.record.meta)).toEqual(['__proto__']);
    expect(row.ok && JSON.stringify(row.record.meta)).toBe('{"__proto__":{"polluted":true}}');
  });

  it('handles CRLF line ends and a missing final newline', async () => {
    const rows = await parse('{"text":"a"}\r\n\r\n{"text":"b"}\r\n{"text":"c"}');
    expect(outline(rows)).toEqual([
      [1, 'a'],
      [3, 'b'],
      [4, 'c'],
    ]);
  });

  it('strips a byte order mark at the start only', async () => {
    const rows = await parse(concatBytes([[0xef, 0xbb, 0xbf], '{"text":"a"}\n', [0xef, 0xbb, 0xbf], '{"text":"b"}\n']));
    expect(outline(rows)).toEqual([
      [1, 'a'],
      [2, `! malformed JSON: ${jsonErrorOf('\uFEFF{"text":"b"}')}`],
    ]);
  });

  it('rejects exactly the line with invalid UTF-8 and accepts a genuine U+FFFD', async () => {
    const rows = await parse(
      concatBytes([
        '{"text":"ok"}\n{"text":"caf',
        [0xc3],
        '"}\n{"text":"\uFFFD replacement"}\n{"text":"',
        [0xed, 0xa0, 0x80],
        '"}\n{"text":"\\ufffd escaped"}\n',
      ]),
    );
    expect(outline(rows)).toEqual([
      [1, 'ok'],
      [2, '! invalid UTF-8 (byte 0xc3 at offset 12 of the line)'],
      [3, '\uFFFD replacement'],
      [4, '! invalid UTF-8 (byte 0xed at offset 9 of the line)'],
      [5, '\uFFFD escaped'],
    ]);
  });

  it('rejects a line over the row cap without losing the following lines', async () => {
    const long = `{"text":"${'x'.repeat(190)}"}`; // 201 bytes
    const rows = await parse(`{"text":"a"}\n${long}\r\n{"text":"b"}\n${long}`, { maxRowBytes: 100 });
    expect(outline(rows)).toEqual([
      [1, 'a'],
      [2, '! line is 202 bytes, over the limit of 100 bytes'], // with its \r
      [3, 'b'],
      [4, '! line is 201 bytes, over the limit of 100 bytes'],
    ]);
  });

  it('yields nothing for an empty input or one of blank lines only', async () => {
    expect(await parse('')).toEqual([]);
    expect(await parse('\n\r\n  \n')).toEqual([]);
  });
});

import { createReadStream } from 'node:fs';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import type { ImportFormat, ParsedRow, ParseOptions } from './import-record.js';
import { parseImport } from './parse-import.js';
import { concatBytes, encoder, jsonErrorOf as jsonError } from './parsing.test-support.js';

/** Everything a parse produced: its rows, then the error it ended with, if any. */
async function outcome(
  chunks: Iterable<Uint8Array>,
  format: ImportFormat,
  options?: ParseOptions,
): Promise<{ rows: ParsedRow[]; error: unknown }> {
  async function* source(): AsyncGenerator<Uint8Array> {
    yield* chunks;
  }
  const rows: ParsedRow[] = [];
  try {
    for await (const row of parseImport(source(), format, options)) rows.push(row);
  } catch (error) {
    return { rows, error };
  }
  return { rows, error: null };
}

function splitAt(bytes: Uint8Array, sizes: () => number): Uint8Array[] {
  const chunks: Uint8Array[] = [];
  for (let start = 0; start < bytes.length;) {
    const end = Math.min(bytes.length, start + sizes());
    chunks.push(bytes.slice(start, end));
    start = end;
  }
  return chunks;
}

/** Park–Miller minimal standard generator, so every chunking is reproducible. */
function seeded(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 16807) % 2147483647;
    return state;
  };
}

const BOM = [0xef, 0xbb, 0xbf];

const FIXTURES: Record<string, { format: ImportFormat; bytes: Uint8Array }> = {
  ndjson: {
    format: 'ndjson',
    bytes: concatBytes([
      BOM,
      '{"text":"café 😀 東京","external_id":1,"tags":["x"]}\r\n',
      '\r\n',
      '{"text":"esc \\"q\\" \\\\ \\u00e9 \\ud83d\\ude00","created_at":"2024-05-06T07:08:09+02:00"}\n',
      '{"text":"bad ',
      [0xf0, 0x9f, 0x98],
      '"}\n',
      '{"text":"\uFFFD genuine"}\r\n',
      '{not json}\n',
      '{"text":"Ｗｉｄｅ ﬁ"}',
    ]),
  },
  csv: {
    format: 'csv',
    bytes: concatBytes([
      BOM,
      'text,external_id,note\r\n',
      '"multi\r\nline, with ""quotes"" and é",1,😀\r\n',
      'plain 東京,2,\r\n',
      'broken ',
      [0xc3, 0x28],
      ',3,x\r\n',
      '"\uFFFD genuine",4,y\r\n',
      'too,many,fields,here\r\n',
      '"bad"x,5,z\r\n',
      'last,6,"end\r\n"',
    ]),
  },
  json: {
    format: 'json',
    bytes: concatBytes([
      BOM,
      '[ {"text":"café 😀","meta":{"k":"]},["}},\r\n',
      '{"text":"esc \\" \\\\ \\u00e9"},',
      '{"text":"bad ',
      [0xe2, 0x82],
      '"},',
      '{"text":"\uFFFD"},',
      '{broken},,',
      '{"text":"last","externalId":"z"}',
      // The array is never closed: the file-level error must also be the same under any chunking.
    ]),
  },
};

describe('parseImport — chunk boundaries', () => {
  for (const [name, { format, bytes }] of Object.entries(FIXTURES)) {
    it(`gives the same rows for ${name} whole, in 1-byte chunks and in random chunks`, async () => {
      const whole = await outcome([bytes], format);
      // Guard against a fixture that parses to nothing interesting.
      expect(whole.rows.filter((r) => r.ok).length).toBeGreaterThanOrEqual(3);
      expect(whole.rows.filter((r) => !r.ok).length).toBeGreaterThanOrEqual(2);

      expect(
        await outcome(
          splitAt(bytes, () => 1),
          format,
        ),
      ).toEqual(whole);
      for (let seed = 1; seed <= 20; seed += 1) {
        const next = seeded(seed);
        expect(
          await outcome(
            splitAt(bytes, () => 1 + (next() % 13)),
            format,
          ),
        ).toEqual(whole);
      }
    });

    it(`gives the same rows for ${name} split in two at every byte`, async () => {
      const whole = await outcome([bytes], format);
      for (let at = 1; at < bytes.length; at += 1) {
        expect(await outcome([bytes.slice(0, at), bytes.slice(at)], format)).toEqual(whole);
      }
    });
  }

  it('parses the fixtures to the expected rows', async () => {
    const ndjson = await outcome([FIXTURES.ndjson.bytes], 'ndjson');
    expect(
      ndjson.rows.map((r) => (r.ok ? [r.record.row, r.record.text] : [r.rejected.row, r.rejected.reason])),
    ).toEqual([
      [1, 'café 😀 東京'],
      [3, 'esc "q" \\ é 😀'],
      [4, 'invalid UTF-8 (byte 0xf0 at offset 13 of the line)'],
      [5, '\uFFFD genuine'],
      [6, `malformed JSON: ${jsonError('{not json}')}`],
      [7, 'Ｗｉｄｅ ﬁ'],
    ]);
    expect(ndjson.rows[5]).toMatchObject({ ok: true, record: { normalizedText: 'wide fi' } });

    const csv = await outcome([FIXTURES.csv.bytes], 'csv');
    expect(
      csv.rows.map((r) => (r.ok ? [r.record.row, r.record.text, r.record.meta] : [r.rejected.row, r.rejected.reason])),
    ).toEqual([
      [2, 'multi\r\nline, with "quotes" and é', { note: '😀' }],
      [4, 'plain 東京', { note: '' }],
      [5, "invalid UTF-8 in column 'text' (byte 0xc3 at offset 7 of the field)"],
      [6, '\uFFFD genuine', { note: 'y' }],
      [7, 'malformed CSV: the row has 4 fields, the header has 3'],
      [
        8,
        "malformed CSV: in column 'text', the closing quote is followed by a character other than a comma or a line break (RFC 4180 §2.7)",
      ],
      [9, 'last', { note: 'end\r\n' }],
    ]);
    expect(csv.error).toBeNull();

    const json = await outcome([FIXTURES.json.bytes], 'json');
    expect(json.rows.map((r) => (r.ok ? [r.record.row, r.record.text] : [r.rejected.row, r.rejected.reason]))).toEqual([
      [1, 'café 😀'],
      [2, 'esc " \\ é'],
      [3, 'invalid UTF-8 (byte 0xe2 at offset 13 of the element)'],
      [4, '\uFFFD'],
      [5, `malformed JSON: ${jsonError('{broken}')}`],
      [6, 'missing array element (an extra comma)'],
      // Element 7 is never followed by ',' or ']', so it is not yielded.
    ]);
    expect(json.error).toMatchObject({
      name: 'ImportFileError',
      row: 7,
      message: 'the JSON array is not closed: the body ends inside element 7',
    });
  });
});

describe('parseImport — byte order mark', () => {
  it('strips a BOM split across chunks', async () => {
    const { rows } = await outcome(
      [Uint8Array.of(0xef), Uint8Array.of(0xbb), concatBytes([[0xbf], '{"text":"a"}\n'])],
      'ndjson',
    );
    expect(rows.map((r) => r.ok && r.record.text)).toEqual(['a']);
  });

  it('keeps bytes that only look like the start of a BOM', async () => {
    const short = await outcome([Uint8Array.of(0xef), Uint8Array.of(0xbb)], 'ndjson');
    expect(short.rows).toEqual([
      { ok: false, rejected: { row: 1, reason: 'invalid UTF-8 (byte 0xef at offset 0 of the line)' } },
    ]);
    const other = await outcome([Uint8Array.of(0xef), concatBytes(['{"text":"a"}'])], 'ndjson');
    expect(other.rows).toEqual([
      { ok: false, rejected: { row: 1, reason: 'invalid UTF-8 (byte 0xef at offset 0 of the line)' } },
    ]);
  });
});

describe('parseImport — streaming', () => {
  it('parses 50 000 NDJSON rows with bounded memory', async () => {
    const rowCount = 50_000;
    const filler = 'lorem ipsum dolor sit amet '.repeat(45); // about 1.2 kB per row
    async function* generate(): AsyncGenerator<Uint8Array> {
      for (let start = 1; start <= rowCount; start += 100) {
        let chunk = '';
        for (let n = start; n < start + 100; n += 1)
          chunk += `{"text":"${n} ${filler}","external_id":"${n}","source":"gen"}\n`;
        yield encoder.encode(chunk);
      }
    }
    const memory = (): number => {
      const usage = process.memoryUsage();
      return usage.heapUsed + usage.arrayBuffers;
    };
    const baseline = memory();
    let peak = baseline;
    let accepted = 0;
    let lastRow = 0;
    for await (const row of parseImport(generate(), 'ndjson')) {
      if (!row.ok) throw new Error(row.rejected.reason);
      accepted += 1;
      lastRow = row.record.row;
      if (accepted % 500 === 0) peak = Math.max(peak, memory());
    }
    expect(accepted).toBe(rowCount);
    expect(lastRow).toBe(rowCount);
    // The input is about 62 MB and its texts about 120 MB as strings (text
    // plus normalised text), so a parser that held the input or its rows
    // would exceed this bound; one row at a time plus uncollected garbage
    // stays far below it.
    expect(peak - baseline).toBeLessThan(50 * 1024 * 1024);
  });

  it('pulls from the input only as fast as rows are consumed, and closes it on early exit', async () => {
    let pulled = 0;
    let closed = false;
    async function* source(): AsyncGenerator<Uint8Array> {
      try {
        for (let n = 1; n <= 1000; n += 1) {
          pulled += 1;
          yield encoder.encode(`{"text":"row ${n}"}\n`);
        }
      } finally {
        closed = true;
      }
    }
    const rows = parseImport(source(), 'ndjson');
    expect(pulled).toBe(0);
    const texts: unknown[] = [];
    for (let n = 0; n < 3; n += 1) {
      const next = await rows.next();
      texts.push(!next.done && next.value.ok && next.value.record.text);
    }
    expect(texts).toEqual(['row 1', 'row 2', 'row 3']);
    expect(pulled).toBe(3);
    expect(closed).toBe(false);
    await rows.return(undefined);
    expect(closed).toBe(true);
    expect(pulled).toBe(3);
  });

  it('reads a file stream and destroys it when the consumer stops early', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'imports-parsing-'));
    try {
      const path = join(dir, 'items.csv');
      await writeFile(path, `text,n\n${Array.from({ length: 20_000 }, (_, i) => `item ${i + 1},${i}`).join('\n')}\n`);
      const stream = createReadStream(path, { highWaterMark: 1024 });
      const texts: string[] = [];
      for await (const row of parseImport(stream, 'csv')) {
        if (row.ok) texts.push(row.record.text);
        if (texts.length === 2) break;
      }
      expect(texts).toEqual(['item 1', 'item 2']);
      expect(stream.destroyed).toBe(true);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  });

  it('accepts a Node stream with string chunks', async () => {
    const stream = Readable.from(['{"text":"é"}\n', '{"text":"b"}']);
    const texts: unknown[] = [];
    for await (const row of parseImport(stream, 'ndjson')) texts.push(row.ok && row.record.text);
    expect(texts).toEqual(['é', 'b']);
  });
});

describe('parseImport — abort and arguments', () => {
  it('throws the abort reason at the next step once the signal is aborted', async () => {
    const controller = new AbortController();
    const rows = parseImport([encoder.encode('{"text":"a"}\n{"text":"b"}\n{"text":"c"}\n')], 'ndjson', {
      signal: controller.signal,
    });
    const first = await rows.next();
    expect(!first.done && first.value.ok && first.value.record.text).toBe('a');
    const reason = new Error('import cancelled');
    controller.abort(reason);
    await expect(rows.next()).rejects.toBe(reason);
  });

  it('throws at once for a signal aborted before the start', async () => {
    const reason = new Error('too late');
    const rows = parseImport([encoder.encode('{"text":"a"}\n')], 'ndjson', { signal: AbortSignal.abort(reason) });
    await expect(rows.next()).rejects.toBe(reason);
  });

  it('checks the format and the limits synchronously', () => {
    const input = [encoder.encode('')];
    expect(() => parseImport(input, 'xml' as ImportFormat)).toThrow(
      new TypeError('format must be one of ndjson, csv, json, got "xml"'),
    );
    expect(() => parseImport(input, 'csv', { maxTextLength: 0 })).toThrow(
      new RangeError('maxTextLength must be a positive integer, got 0'),
    );
    expect(() => parseImport(input, 'csv', { maxTextLength: 1.5 })).toThrow(
      new RangeError('maxTextLength must be a positive integer, got 1.5'),
    );
    expect(() => parseImport(input, 'csv', { maxMetaBytes: Number.NaN })).toThrow(
      new RangeError('maxMetaBytes must be a positive integer, got NaN'),
    );
    expect(() => parseImport(input, 'json', { maxRowBytes: -1 })).toThrow(
      new RangeError('maxRowBytes must be a positive integer, got -1'),
    );
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import type { DbInt } from '#database';

const ROWS = 50_000;

/** What each generated row is, decided by its number; the test's expectations come from the same rules. */
function kindOf(row: number): 'empty' | 'malformed' | 'badutf8' | 'toolong' | 'dupText' | 'dupExternal' | 'ok' {
  if (row % 1000 === 0) return 'empty';
  if (row % 1000 === 500) return 'malformed';
  if (row % 5000 === 1) return 'badutf8';
  if (row === 12_345) return 'toolong';
  if (row % 2500 === 7) return 'dupText';
  if (row % 10_000 === 3) return 'dupExternal';
  return 'ok';
}

function ndjson(): Buffer {
  const parts: Buffer[] = [];
  for (let row = 1; row <= ROWS; row++) {
    const k = kindOf(row);
    let line: Buffer;
    switch (k) {
      case 'empty':
        line = Buffer.from(JSON.stringify({ text: '   ', external_id: `e${row}` }));
        break;
      case 'malformed':
        line = Buffer.from(`{"text": "post ${row}", oops}`);
        break;
      case 'badutf8':
        line = Buffer.concat([Buffer.from(`{"text": "post ${row} `), Buffer.from([0xc3, 0x28]), Buffer.from('"}')]);
        break;
      case 'toolong':
        line = Buffer.from(JSON.stringify({ text: 'x'.repeat(1001) }));
        break;
      // Same normalised text as the row before: other case, extra spaces, full-width letters.
      case 'dupText':
        line = Buffer.from(JSON.stringify({ text: `  POST   number ${row - 1} from ｍｏｓｓｂａｎｋ` }));
        break;
      case 'dupExternal':
        line = Buffer.from(JSON.stringify({ text: `another text ${row}`, external_id: `e${row - 1}` }));
        break;
      default:
        line = Buffer.from(
          JSON.stringify({
            text: `post number ${row} from mossbank`,
            external_id: `e${row}`,
            source: 'forum',
            created_at: '2026-03-01T12:00:00Z',
            thread: row % 7,
          }),
        );
    }
    parts.push(line, Buffer.from('\n'));
  }
  return Buffer.concat(parts);
}

describe.each(DATABASE_KINDS)('imports on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let deskId: number;

  beforeAll(async () => {
    s = await startStack(kind, { env: { MAX_TEXT_LENGTH: '1000' } });
    sup = await s.user('sup', 'supervisor');
    const r = await s.call(sup, 'POST', '/api/desks', {
      name: 'Mossbank',
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['hurt you'] },
    });
    expect(r.status).toBe(201);
    deskId = r.body.id;
    await s.enrol(deskId);
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  const waitDone = (importId: string) =>
    eventually(
      async () => {
        const r = await s.call(sup, 'GET', `/api/imports/${importId}`);
        return r.body.state === 'done' || r.body.state === 'failed' ? r.body : undefined;
      },
      120_000,
      `import ${importId}`,
    );

  it('imports 50 000 NDJSON rows, rejecting and de-duplicating exactly the rows it should', async () => {
    const counts = { empty: 0, malformed: 0, badutf8: 0, toolong: 0, dupText: 0, dupExternal: 0, ok: 0 };
    for (let row = 1; row <= ROWS; row++) counts[kindOf(row)]++;
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, new Uint8Array(ndjson()), {
      'content-type': 'application/x-ndjson',
    });
    expect(r.status).toBe(202);
    const done = await waitDone(r.body.importId);
    expect(done.state).toBe('done');
    expect(done.rowsRead).toBe(ROWS);
    expect(done.rejected).toBe(counts.empty + counts.malformed + counts.badutf8 + counts.toolong);
    expect(done.duplicates).toBe(counts.dupText + counts.dupExternal);
    expect(done.imported).toBe(counts.ok);
    const reasons = new Map<number, string>(done.errors.map((e: { row: number; reason: string }) => [e.row, e.reason]));
    expect(reasons.get(1000)).toMatch(/empty/);
    expect(reasons.get(500)).toMatch(/JSON/i);
    expect(reasons.get(5001)).toMatch(/UTF-8/);
    expect(reasons.get(12_345)).toMatch(/1001.*1000|1000.*1001/);
    const [{ n }] = await s.db.query<{ n: number | string }>(
      null,
      'SELECT COUNT(*) AS n FROM items WHERE desk_id = $1',
      [deskId],
    );
    expect(Number(n)).toBe(counts.ok);
    // Seed terms are counted at import for the cold start: no generated post says "hurt you".
    const [item] = await s.db.query<{ text: string; meta: string; source: string; external_id: string }>(
      null,
      `SELECT text, meta, source, external_id FROM items WHERE external_id = 'e2'`,
    );
    expect(item).toEqual({
      text: 'post number 2 from mossbank',
      meta: JSON.stringify({ thread: 2 }),
      source: 'forum',
      external_id: 'e2',
    });
  }, 180_000);

  it('keeps CSV fields with quoted newlines and quotes (RFC 4180 §2) exactly as received', async () => {
    const csv =
      'external_id,text,source,created_at,board\r\n' +
      'c1,"He said ""I will hurt you""\nat the meeting",forum,2026-02-01T10:00:00Z,general\r\n' +
      'c2,plain line,forum,,events\r\n' +
      'c3,,forum,,events\r\n' +
      'c4,"bad date",forum,yesterday,events\r\n';
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, csv, {
      'content-type': 'text/csv; charset=utf-8',
    });
    expect(r.status).toBe(202);
    const done = await waitDone(r.body.importId);
    expect({
      rowsRead: done.rowsRead,
      imported: done.imported,
      rejected: done.rejected,
      duplicates: done.duplicates,
    }).toEqual({ rowsRead: 4, imported: 2, rejected: 2, duplicates: 0 });
    // Row numbers are the line where the record starts: the header is line 1, c1 spans lines 2-3.
    expect(done.errors.map((e: { row: number }) => e.row)).toEqual([5, 6]);
    const rows = await s.db.query<{ text: string; seed_hits: DbInt; meta: string }>(
      null,
      `SELECT text, seed_hits, meta FROM items WHERE external_id = 'c1'`,
    );
    expect(rows[0].text).toBe('He said "I will hurt you"\nat the meeting');
    expect(Number(rows[0].seed_hits)).toBe(1);
    expect(JSON.parse(rows[0].meta)).toEqual({ board: 'general' });
  });

  it('accepts a JSON array and a multipart file, and counts a re-import as duplicates', async () => {
    const arr = JSON.stringify([{ text: 'json one', external_id: 'j1' }, { text: 42 }, { text: 'json two' }]);
    const r1 = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, arr, { 'content-type': 'application/json' });
    const d1 = await waitDone(r1.body.importId);
    expect({ imported: d1.imported, rejected: d1.rejected }).toEqual({ imported: 2, rejected: 1 });
    expect(d1.errors[0].row).toBe(2);

    const form = new FormData();
    form.append('file', new Blob([arr], { type: 'application/octet-stream' }), 'again.json');
    const r2 = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, form);
    expect(r2.status).toBe(202);
    const d2 = await waitDone(r2.body.importId);
    expect({
      imported: d2.imported,
      duplicates: d2.duplicates,
      rejected: d2.rejected,
      fileName: d2.fileName,
      format: d2.format,
    }).toEqual({ imported: 0, duplicates: 2, rejected: 1, fileName: 'again.json', format: 'json' });
  });

  it('refuses an unknown content type and an unknown desk with clear errors', async () => {
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, 'hello', { 'content-type': 'text/plain' });
    expect(r.status).toBe(415);
    expect(r.body.message).toMatch(/application\/x-ndjson/);
    const r2 = await s.call(sup, 'POST', '/api/desks/9999/imports', '{"text":"a"}\n', {
      'content-type': 'application/x-ndjson',
    });
    expect(r2.status).toBe(404);
  });

  it('fails a JSON body that is not an array, and says why', async () => {
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, '{"text":"not in an array"}', {
      'content-type': 'application/json',
    });
    const d = await waitDone(r.body.importId);
    expect(d.state).toBe('failed');
    expect(d.failure).toMatch(/array/i);
  });
});

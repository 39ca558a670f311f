import { existsSync, readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TOMBSTONE_TEXT, type DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

const ITEMS = 120;
const REVIEWERS = 4;
/** A marker no other text holds (delimited, so marker 1 is not found inside marker 12). */
const marker = (i: number) => `zq${i}qz`;

describe.each(DATABASE_KINDS)('erased texts are gone on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let deskId = 0;
  const tokens: string[] = [];
  let ids: number[] = [];
  /** Erased, by item id: when the erasure that took it had answered. */
  const erasedAt = new Map<number, number>();
  const served: Array<{ start: number; id: number; text: string }> = [];

  beforeAll(async () => {
    // Words are counted at once after an import or an erasure (no debounce), so the test can wait for the count.
    s = await startStack(kind, { env: { TERMS_AFTER_SECONDS: '0' } });
    sup = await s.user('gone-sup', 'supervisor');
    for (let i = 0; i < REVIEWERS; i++) tokens.push(await s.user(`gone-r${i}`, 'reviewer'));
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'gone',
      categories: ['threat', 'ok'],
      seedTerms: { threat: ['hurt'] },
    });
    deskId = d.body.id as number;
    await s.enrol(deskId);
    const lines = Array.from({ length: ITEMS }, (_, i) =>
      JSON.stringify({
        text: `${i % 4 === 0 ? 'I will hurt' : 'calm words about'} the pond, ${marker(i)}`,
        external_id: `gone-${i}`,
        meta: { note: `meta ${marker(i)}` },
      }),
    );
    const imp = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, lines.join('\n'), {
      'content-type': 'application/x-ndjson',
    });
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
      'import',
    );
    await s.waitForQueuesIdle(60_000);
    expect(await itemsCounted()).toBe(ITEMS);
    ids = (await s.db.query<{ id: DbInt }>(null, 'SELECT id FROM items WHERE desk_id = $1 ORDER BY id', [deskId])).map(
      (r) => Number(r.id),
    );
  }, 120_000);
  afterAll(async () => (s as Stack | undefined)?.stop());
  const itemsCounted = async () =>
    Number(
      (
        await s.db.query<{ n: DbInt }>(null, 'SELECT items_counted AS n FROM term_statistics WHERE desk_id = $1', [
          deskId,
        ])
      )[0]?.n ?? -1,
    );

  it('never serves an erased text while reviewers lease and a supervisor erases at the same time', async () => {
    // Every other item, erased ten at a time, while four reviewers lease until the queue is empty.
    const doomed = ids.filter((_, i) => i % 2 === 1);
    const erase = async () => {
      for (let k = 0; k < doomed.length; k += 10) {
        const part = doomed.slice(k, k + 10);
        const r = await s.call(sup, 'POST', `/api/desks/${deskId}/erasures`, { itemIds: part, reason: 'race check' });
        expect(r.status).toBe(201);
        const done = Date.now();
        for (const id of part) erasedAt.set(id, done);
      }
    };
    const lease = async (token: string) => {
      for (;;) {
        const start = Date.now();
        const r = await s.call(token, 'POST', `/api/desks/${deskId}/leases`);
        if (r.status === 204) return;
        expect(r.status).toBe(201);
        served.push({ start, id: r.body.item.id as number, text: r.body.item.text as string });
      }
    };
    await Promise.all([erase(), ...tokens.map(lease)]);
    expect(erasedAt.size).toBe(doomed.length);
    // Each item at most once; the tombstone never; an erased item only to a request made before its erasure answered.
    expect(new Set(served.map((x) => x.id)).size).toBe(served.length);
    for (const x of served) {
      expect(x.text).not.toBe(TOMBSTONE_TEXT);
      expect(x.text).toContain(marker(ids.indexOf(x.id)));
      const gone = erasedAt.get(x.id);
      if (gone !== undefined) expect(x.start).toBeLessThan(gone);
    }
    // Every item kept was served.
    const kept = ids.filter((id) => !erasedAt.has(id));
    expect(kept.every((id) => served.some((x) => x.id === id))).toBe(true);
  }, 120_000);

  it('counts the desk’s words again without the erased texts', async () => {
    await s.waitForQueuesIdle(60_000);
    expect(await itemsCounted()).toBe(ITEMS - erasedAt.size);
  });

  it('leaves no erased marker anywhere in the database', async () => {
    const erased = ids.map((id, i) => ({ id, i })).filter((x) => x.i % 2 === 1);
    const kept = ids.map((id, i) => ({ id, i })).filter((x) => x.i % 2 === 0);
    if (kind === 'postgres') {
      // Every row of every table, as text, and every binary column as bytes.
      const tables = await s.db.query<{ table_name: string }>(
        null,
        `SELECT table_name FROM information_schema.tables WHERE table_schema = 'public' AND table_type = 'BASE TABLE'`,
      );
      const binary = await s.db.query<{ table_name: string; column_name: string }>(
        null,
        `SELECT table_name, column_name FROM information_schema.columns WHERE table_schema = 'public' AND data_type = 'bytea'`,
      );
      const find = async (text: string) => {
        let n = 0;
        for (const { table_name: t } of tables)
          n += Number(
            (
              await s.db.query<{ n: DbInt }>(null, `SELECT COUNT(*) AS n FROM "${t}" x WHERE CAST(x AS text) LIKE $1`, [
                `%${text}%`,
              ])
            )[0].n,
          );
        for (const { table_name: t, column_name: c } of binary)
          n += Number(
            (
              await s.db.query<{ n: DbInt }>(
                null,
                `SELECT COUNT(*) AS n FROM "${t}" WHERE position(convert_to($1, 'UTF8') in "${c}") > 0`,
                [text],
              )
            )[0].n,
          );
        return n;
      };
      for (const { i } of erased.slice(0, 10)) expect(await find(marker(i)), marker(i)).toBe(0);
      // The search finds what is there: a kept item's marker (its text and its metadata).
      expect(await find(marker(kept[0].i))).toBeGreaterThanOrEqual(1);
    } else {
      // The file as it lies on disk, and its write-ahead log: no VACUUM needed (secure_delete zeroes what is freed,
      // and each erasure checkpoints the log into the file and truncates it).
      const file = s.config.database.kind === 'sqlite' ? s.config.database.file : '';
      const bytes = Buffer.concat([
        readFileSync(file),
        existsSync(`${file}-wal`) ? readFileSync(`${file}-wal`) : Buffer.alloc(0),
      ]);
      const missing = erased.filter(({ i }) => bytes.includes(marker(i)));
      expect(missing.map(({ i }) => marker(i))).toEqual([]);
      expect(bytes.includes(marker(kept[0].i))).toBe(true);
    }
  });
});

import { readFileSync } from 'node:fs';
import { Readable } from 'node:stream';
import { parse } from 'csv-parse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TRAIL_COLUMNS } from '#verdicts';
import { DATABASE_KINDS } from '../support/databases.js';
import { exited, freePort, spawnApp, waitReady } from '../support/processes.js';
import { startStack, type Stack } from '../support/stack.js';
import { deskWithItems, insertVerdicts, userId, type VerdictRow } from '../support/verdict-rows.js';

const ITEMS = 2000;
const REVIEWERS = 10;
const PER_PAIR = 10;
const VERDICTS = ITEMS * REVIEWERS * PER_PAIR; // 200 000
const CATEGORIES = ['threat', 'harassment', 'ok, "fine"'];
const MB = 1024 * 1024;

/** Resident set size and its high-water mark of a process, in bytes (Linux /proc). */
function memoryOf(pid: number): { rss: number; hwm: number } {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  const kb = (key: string) => Number(new RegExp(`^${key}:\\s+(\\d+) kB`, 'm').exec(status)?.[1] ?? NaN) * 1024;
  return { rss: kb('VmRSS'), hwm: kb('VmHWM') };
}

describe.each(DATABASE_KINDS)('the decision trail export on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let deskId = 0;
  let itemIds: number[] = [];
  const start = new Date('2026-03-01T00:00:00Z');
  // Verdict k of a (item, reviewer) pair: the first nine are undone, the tenth is live; one second apart per batch row.
  const noteOf = (i: number) =>
    i % 97 === 0 ? `line one, "quoted"\r\nline two — ünïcode ${i}` : i % 5 === 0 ? `note ${i}` : null;

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('trail-sup', 'supervisor');
    const reviewers: number[] = [];
    for (let r = 0; r < REVIEWERS; r++) {
      await s.user(`trail-rev${r}`, 'reviewer');
      reviewers.push(await userId(s.db, `trail-rev${r}`));
    }
    const d = await deskWithItems(s, sup, CATEGORIES, ITEMS, 'trail');
    deskId = d.deskId;
    itemIds = d.itemIds;
    const cats = CATEGORIES.map((c) => d.categoryIds[c]);
    const rows: VerdictRow[] = [];
    let n = 0;
    for (let k = 0; k < PER_PAIR; k++) {
      for (const itemId of itemIds) {
        for (const reviewerId of reviewers) {
          const i = n++;
          rows.push({
            itemId,
            reviewerId,
            categoryId: i % 11 === 0 ? null : cats[i % 3],
            undone: k < PER_PAIR - 1,
            createdAt: new Date(start.getTime() + i * 1000),
            note: noteOf(i),
            ...(i % 4 === 0
              ? { modelVersion: 1, shownSet: ['threat', CATEGORIES[2]], shownCall: 'ambiguous' as const }
              : {}),
          });
        }
      }
    }
    await insertVerdicts(s.db, deskId, rows, 1000);
    // A live database has planner statistics (autovacuum gathers them after a bulk change); give this one the same.
    if (kind === 'postgres') await s.db.query(null, 'ANALYZE verdicts');
    // The insert kept this process busy past the server's keep-alive timeout: let it close the idle connections now,
    // so that the next request does not go out on a socket the server is closing.
    await new Promise((r) => setTimeout(r, 250));
    expect(
      (
        await s.call(sup, 'POST', `/api/items/${itemIds[0]}/settle`, {
          category: CATEGORIES[2],
          reason: 'for the trail',
        })
      ).status,
    ).toBe(201);
  }, 600_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it(`streams ${VERDICTS} verdicts as RFC 4180 CSV from a separate API process with flat memory`, async () => {
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    const api = spawnApp('api', { ...s.config, port });
    try {
      await waitReady(base);
      const headers = { authorization: `Bearer ${sup}` };
      // Warm up the routes once (a filtered, small export), then take the baseline.
      expect(
        (
          await (
            await fetch(`${base}/api/desks/${deskId}/trail.csv?reviewer=trail-rev0&to=2026-03-01T00:01:00Z`, {
              headers,
            })
          ).text()
        ).length,
      ).toBeGreaterThan(0);
      await new Promise((r) => setTimeout(r, 300));
      const baseline = memoryOf(api.pid!);
      let peak = baseline.rss;
      const sampler = setInterval(() => {
        peak = Math.max(peak, memoryOf(api.pid!).rss);
      }, 25);
      const t0 = performance.now();
      const res = await fetch(`${base}/api/desks/${deskId}/trail.csv`, { headers });
      expect(res.status).toBe(200);
      expect(res.headers.get('content-type')).toMatch(/^text\/csv; charset=utf-8/);
      expect(res.headers.get('content-disposition')).toBe(`attachment; filename="desk-${deskId}-trail.csv"`);
      const parser = Readable.fromWeb(res.body as never).pipe(parse({ columns: false, relax_quotes: false }));
      let header: string[] | null = null;
      let count = 0;
      let multiline = 0;
      const noteColumn = TRAIL_COLUMNS.indexOf('note');
      const picked = new Map<number, string[]>();
      for await (const record of parser as AsyncIterable<string[]>) {
        if (!header) {
          header = record;
          continue;
        }
        count++;
        if (count === 20_000) await new Promise((r) => setTimeout(r, 1500)); // a slow client: the server must wait, not buffer
        const id = Number(record[0]);
        const quoted = record[noteColumn].includes('\r\n');
        if (quoted) multiline++;
        if (id % 9973 === 0 || count === 1 || (quoted && multiline <= 3)) picked.set(id, record);
      }
      const seconds = (performance.now() - t0) / 1000;
      clearInterval(sampler);
      const after = memoryOf(api.pid!);
      const growth = Math.max(peak, after.rss) - baseline.rss;
      console.log(
        JSON.stringify({
          kind,
          verdicts: count,
          seconds: Number(seconds.toFixed(2)),
          baselineRssMb: +(baseline.rss / MB).toFixed(1),
          peakRssMb: +(peak / MB).toFixed(1),
          growthMb: +(growth / MB).toFixed(1),
          hwmBeforeMb: +(baseline.hwm / MB).toFixed(1),
          hwmAfterMb: +(after.hwm / MB).toFixed(1),
        }),
      );
      expect(header).toEqual([...TRAIL_COLUMNS]);
      expect(count).toBe(VERDICTS);
      // Every multi-line note with quotes and commas came back as one field (and three of them are compared below).
      expect(multiline).toBe(Math.ceil(VERDICTS / 97));
      expect(growth).toBeLessThan(100 * MB);

      // A few rows against the database.
      const ids = [...picked.keys()];
      const stored = await s.db.query(
        null,
        `SELECT v.id, v.item_id, v.note, c.name AS category, v.undone_at, v.created_at, v.shown_set FROM verdicts v LEFT JOIN categories c ON c.id = v.category_id WHERE v.id IN (${ids.map((_, i) => `$${i + 1}`).join(', ')})`,
        ids,
      );
      expect(stored).toHaveLength(ids.length);
      const col = (name: (typeof TRAIL_COLUMNS)[number]) => TRAIL_COLUMNS.indexOf(name);
      for (const r of stored) {
        const rec = picked.get(Number(r.id))!;
        expect(Number(rec[col('item_id')])).toBe(Number(r.item_id));
        expect(rec[col('external_id')]).toBe(`mb-${itemIds.indexOf(Number(r.item_id))}`);
        expect(rec[col('note')]).toBe((r.note as string | null) ?? '');
        expect(rec[col('category')]).toBe((r.category as string | null) ?? '');
        expect(rec[col('abstain')]).toBe(String(r.category === null));
        expect(rec[col('undone')]).toBe(String(r.undone_at !== null));
        expect(rec[col('created_at')]).toBe(s.db.parseTime(r.created_at)!.toISOString());
        expect(rec[col('shown_set')]).toBe(r.shown_set ? JSON.stringify(JSON.parse(r.shown_set as string)) : '');
        const settled = Number(r.item_id) === itemIds[0];
        expect(rec[col('settled_category')]).toBe(settled ? CATEGORIES[2] : '');
        expect(rec[col('settled_by')]).toBe(settled ? 'trail-sup' : '');
      }
    } finally {
      api.kill('SIGTERM');
      await exited(api);
    }
  }, 600_000);

  it('filters by reviewer, category and time, as NDJSON too, and refuses bad filters', async () => {
    const url = (q: string, ext = 'ndjson') => `/api/desks/${deskId}/trail.${ext}${q}`;
    const lines = async (q: string) => {
      const r = await fetch(`${s.base}${url(q)}`, { headers: { authorization: `Bearer ${sup}` } });
      expect(r.status).toBe(200);
      expect(r.headers.get('content-type')).toMatch(/^application\/x-ndjson/);
      const text = await r.text();
      expect(text === '' || text.endsWith('\n')).toBe(true);
      return text
        .split('\n')
        .filter(Boolean)
        .map((l) => JSON.parse(l));
    };
    // The first 100 seconds hold verdicts 0…99 (one per second), i.e. item 0 and item 1 of round 0 … item 9: all undone.
    const first = await lines('?from=2026-03-01T00:00:00Z&to=2026-03-01T00:01:40Z');
    expect(first).toHaveLength(100);
    expect(first.every((r) => r.undone === true && r.undoneAt !== null)).toBe(true);
    expect(first[0]).toMatchObject({
      itemId: itemIds[0],
      externalId: 'mb-0',
      reviewer: 'trail-rev0',
      abstain: true,
      category: null,
      settledCategory: CATEGORIES[2],
      settledBy: 'trail-sup',
      draw: 'uncertainty',
      simulated: false,
    });
    expect(first[1]).toMatchObject({ category: CATEGORIES[1], modelVersion: null });
    expect(first[4]).toMatchObject({ modelVersion: 1, shownSet: ['threat', CATEGORIES[2]], shownCall: 'ambiguous' });
    const mine = await lines('?reviewer=trail-rev3&category=threat&from=2026-03-01&to=2026-03-01T01:00:00Z');
    expect(mine.length).toBeGreaterThan(0);
    expect(mine.every((r) => r.reviewer === 'trail-rev3' && r.category === 'threat')).toBe(true);
    expect((await lines('?category=abstain&to=2026-03-01T00:10:00Z')).every((r) => r.abstain === true)).toBe(true);
    expect(await lines('?reviewer=nobody')).toEqual([]);
    for (const q of [
      '?from=yesterday',
      '?to=2026-02-30',
      '?from=2026-03-02&to=2026-03-01',
      '?category=menace',
      '?from=1&from=2',
    ]) {
      const r = await s.call(sup, 'GET', url(q, 'csv'));
      expect(r.status, q).toBe(400);
    }
    expect((await s.call(sup, 'GET', '/api/desks/9999/trail.csv')).status).toBe(404);
    expect((await s.call(s.tokens['trail-rev0'], 'GET', url(''))).status).toBe(403);
  });
});

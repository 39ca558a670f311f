import { spawnSync } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { TOMBSTONE_TEXT, type DbInt } from '#database';
import { JOBS, JobQueueService } from '#queues';
import { RetentionClock } from '#retention';
import { DATABASE_KINDS } from '../support/databases.js';
import { built } from '../support/processes.js';
import { startStack, type Stack } from '../support/stack.js';
import { deskWithItems, insertVerdicts, userId } from '../support/verdict-rows.js';

const DAY = 24 * 3600 * 1000;

describe.each(DATABASE_KINDS)('retention periods on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let deskId = 0;
  let ids: number[] = [];
  const t0 = Date.now();
  const at = (days: number) => new Date(t0 + days * DAY);
  const q = <T = Record<string, unknown>>(sql: string, params: unknown[] = []) => s.db.query<T>(null, sql, params);
  const erased = async () =>
    (
      await q<{ id: DbInt }>('SELECT id FROM items WHERE desk_id = $1 AND erased_at IS NOT NULL ORDER BY id', [deskId])
    ).map((r) => Number(r.id));
  /** Sets the clock of the API's and the worker's retention service. */
  const setClock = (d: Date) => {
    for (const app of [s.api, s.worker!]) vi.spyOn(app.get(RetentionClock), 'now').mockReturnValue(d);
  };

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('ret-sup', 'supervisor');
    await s.user('ret-aud', 'auditor');
    await s.user('ret-rev', 'reviewer');
    const d = await deskWithItems(s, sup, ['threat', 'harassment', 'ok'], 10, 'retention desk');
    deskId = d.deskId;
    ids = d.itemIds;
    const rev = await userId(s.db, 'ret-rev');
    const c = d.categoryIds;
    // Items 0–2 ok, 3–4 threat, 5 abstained (no label), 6 decided ok then settled as threat; 7–9 never decided.
    await insertVerdicts(s.db, deskId, [
      ...[0, 1, 2].map((i) => ({ itemId: ids[i], reviewerId: rev, categoryId: c.ok })),
      ...[3, 4].map((i) => ({ itemId: ids[i], reviewerId: rev, categoryId: c.threat })),
      { itemId: ids[5], reviewerId: rev, categoryId: null },
      { itemId: ids[6], reviewerId: rev, categoryId: c.ok },
    ]);
    await s.db.write(async (m) => {
      await s.db.query(m, `UPDATE items SET state = 'decided' WHERE desk_id = $1 AND id <= $2`, [deskId, ids[6]]);
      await s.db.query(
        m,
        `INSERT INTO settlements (desk_id, item_id, category_id, settled_by, reason, created_at) VALUES ($1, $2, $3, $4, $5, $6)`,
        [deskId, ids[6], c.threat, await userId(s.db, 'ret-sup'), 'the second reading holds', s.db.time(new Date())],
      );
    });
  }, 120_000);
  afterAll(async () => {
    vi.restoreAllMocks();
    await (s as Stack | undefined)?.stop();
  });

  it('refuses periods out of range, unknown categories and unknown fields with a 400 naming them', async () => {
    const bad: Array<[unknown, RegExp]> = [
      [{ decidedAfterDays: 0 }, /retention\.decidedAfterDays: .*1 to 3650/],
      [{ openAfterDays: 3651 }, /retention\.openAfterDays/],
      [{ decidedAfterDays: 1.5 }, /retention\.decidedAfterDays/],
      [{ categories: { ok: 30, nope: 3 } }, /retention\.categories\.nope: not a category/],
      [{ categories: { ok: '30' } }, /retention\.categories\.ok/],
      [{ keepForever: true }, /retention\.keepForever: unknown/],
      ['a year', /retention/],
    ];
    for (const [retention, message] of bad) {
      const r = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { retention });
      expect(r.status, JSON.stringify(retention)).toBe(400);
      expect(JSON.stringify(r.body)).toMatch(message);
    }
    const desk = await s.call(sup, 'GET', `/api/desks/${deskId}`);
    expect(desk.body.retention).toEqual({ decidedAfterDays: null, categories: {}, openAfterDays: null });
  });

  it('stores the periods, audited; a reviewer may not change them', async () => {
    const r = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, {
      retention: { decidedAfterDays: 365, categories: { threat: 1095, ok: 30 }, openAfterDays: 60 },
    });
    expect(r.status).toBe(200);
    // Categories in the desk's order.
    expect(r.body.retention).toEqual({
      decidedAfterDays: 365,
      categories: { threat: 1095, ok: 30 },
      openAfterDays: 60,
    });
    expect(Object.keys(r.body.retention.categories)).toEqual(['threat', 'ok']);
    const [event] = await q<{ after: string }>(
      `SELECT after FROM audit_events WHERE desk_id = $1 AND action = 'desk.update' ORDER BY id DESC`,
      [deskId],
    );
    expect(JSON.parse(event.after)).toEqual({ retention: r.body.retention });
    const denied = await s.call(s.tokens['ret-rev'], 'PATCH', `/api/desks/${deskId}`, { retention: {} });
    expect(denied.status).toBe(403);
  });

  it('a dry run counts by category what would go at the clock’s time and erases nothing', async () => {
    setClock(at(0));
    const now = await s.call(sup, 'POST', `/api/desks/${deskId}/retention/run?dryRun=1`);
    expect(now.status).toBe(200);
    expect(now.body.run).toMatchObject({ dryRun: true, items: 0, open: 0, unlabelled: 0 });
    expect(now.body.run.byCategory).toEqual({ threat: 0, harassment: 0, ok: 0 });

    setClock(at(40));
    const later = await s.call(sup, 'POST', `/api/desks/${deskId}/retention/run?dryRun=1`);
    expect(later.body.run).toMatchObject({ dryRun: true, items: 3, open: 0, unlabelled: 0, at: at(40).toISOString() });
    expect(later.body.run.byCategory).toEqual({ threat: 0, harassment: 0, ok: 3 });
    expect(await erased()).toEqual([]);

    expect((await s.call(sup, 'POST', `/api/desks/${deskId}/retention/run?dryRun=maybe`)).status).toBe(400);
    expect((await s.call(s.tokens['ret-aud'], 'POST', `/api/desks/${deskId}/retention/run?dryRun=1`)).status).toBe(403);
  });

  it('a run erases by category through the erasure path, recorded as retention', async () => {
    setClock(at(40));
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/retention/run`);
    expect(r.status).toBe(200);
    expect(r.body.run).toMatchObject({ dryRun: false, items: 3, byCategory: { ok: 3, threat: 0, harassment: 0 } });
    expect(await erased()).toEqual(ids.slice(0, 3));
    const rows = await q<{ text: string; erased_by: string; erased_at: unknown; external_id: string | null }>(
      'SELECT text, erased_by, erased_at, external_id FROM items WHERE id IN ($1, $2, $3)',
      ids.slice(0, 3),
    );
    for (const row of rows) {
      expect(row).toMatchObject({ text: TOMBSTONE_TEXT, erased_by: 'retention', external_id: null });
      expect(s.db.parseTime(row.erased_at)!.toISOString()).toBe(at(40).toISOString());
    }
    const list = await s.call(sup, 'GET', `/api/desks/${deskId}/erasures`);
    expect(list.body.erasures).toHaveLength(1);
    expect(list.body.erasures[0]).toMatchObject({
      erasedBy: 'retention',
      requestedBy: null,
      erased: 3,
      byCategory: { ok: 3 },
      unlabelled: 0,
    });
    // The verdicts stay.
    const [{ n }] = await q<{ n: DbInt }>('SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1', [deskId]);
    expect(Number(n)).toBe(7);
    // Running again at the same time finds nothing more.
    const again = await s.call(sup, 'POST', `/api/desks/${deskId}/retention/run`);
    expect(again.body.run.items).toBe(0);
  });

  it('the daily job applies every desk’s periods: a settled label counts, threat stays three years', async () => {
    setClock(at(400));
    await s.api.get(JobQueueService).add(JOBS.applyRetention, {});
    await s.waitForQueuesIdle(30_000);
    // 365 days: the abstained item; 60 days: the open items. Threat (1095 days) stays, the settled item too (threat).
    expect(await erased()).toEqual([...ids.slice(0, 3), ids[5], ...ids.slice(7)]);
    const [e] = (await s.call(sup, 'GET', `/api/desks/${deskId}/erasures`)).body.erasures;
    expect(e).toMatchObject({ erasedBy: 'retention', erased: 4, unlabelled: 4 });
  });

  it('`cribra retention run` erases; periods count from the last decision', async () => {
    // The command reads the real clock: move the decisions three years and a day back instead.
    await s.db.write(async (m) => {
      await s.db.query(m, 'UPDATE verdicts SET created_at = $1 WHERE item_id = $2', [s.db.time(at(-1096)), ids[3]]);
      await s.db.query(m, 'UPDATE items SET imported_at = $1 WHERE id = $2', [s.db.time(at(-1100)), ids[3]]);
    });
    const env = { PATH: process.env.PATH ?? '', DATA_DIR: s.config.dataDir, DATABASE_URL: s.config.database.url };
    const cli = (args: string[]) =>
      spawnSync(process.execPath, [built('apps/cli/src/main.js'), 'retention', 'run', ...args], {
        env,
        encoding: 'utf8',
        timeout: 60_000,
      });
    const run = cli([]);
    expect(run.status).toBe(0);
    expect(JSON.parse(run.stdout).desks[0]).toMatchObject({ deskId, items: 1, byCategory: { threat: 1 } });
    expect(await erased()).toContain(ids[3]);
    expect(await erased()).not.toContain(ids[4]);
    const usage = cli(['--desk', 'x']);
    expect(usage.status).toBe(2);
    expect(usage.stderr).toMatch(/--desk "x": expected a whole number/);
  });
});

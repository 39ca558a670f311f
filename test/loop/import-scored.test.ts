import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { importRows } from '../support/labelled-desk.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { webDesk, type WebDesk } from '../support/web-desk.js';

/*
 * Items imported after a version scored the pool: with no new verdict there is nothing new to learn, so no retrain
 * comes; the current version scores them itself, and screening sees them at once.
 */
describe.each(DATABASE_KINDS)('items imported after a version exists, on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 120, verdicts: 60 });
    expect((await s.call(desk.sup, 'PATCH', `/api/desks/${desk.deskId}`, { watch: ['threat'] })).status).toBe(200);
  }, 240_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  /** Open items without a prediction of the desk's current version. */
  const unscored = async () => {
    const r = await s.db.queryOne<{ n: DbInt }>(
      null,
      `SELECT COUNT(*) AS n FROM items i JOIN desks d ON d.id = i.desk_id
       WHERE i.desk_id = $1 AND i.state <> 'decided'
         AND NOT EXISTS (SELECT 1 FROM predictions p WHERE p.item_id = i.id AND p.model_version = d.current_model_version)`,
      [desk.deskId],
    );
    return Number(r?.n);
  };

  it('scores two imports in a row with no verdict between them, each under the current version', async () => {
    const current = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
    expect(current).toBeGreaterThanOrEqual(1);
    // Screening read once before the imports, so its cache holds the version's predictions as they were.
    expect((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/screening`)).body.unscored).toBe(0);
    for (const batch of [0, 1]) {
      await importRows(
        s,
        desk.sup,
        desk.deskId,
        Array.from({ length: 15 }, (_, i) => ({ text: `a later post ${batch}-${i} about the allotment gate` })),
      );
      await eventually(async () => ((await unscored()) === 0 ? true : undefined), 60_000, `import ${batch} scored`);
      const screening = (
        await s.call<{ open: number; flagged: number; cleared: number; unscored: number }>(
          desk.sup,
          'GET',
          `/api/desks/${desk.deskId}/screening`,
        )
      ).body;
      expect(screening.unscored).toBe(0);
      expect(screening.flagged + screening.cleared).toBe(screening.open);
      // Served with the model's call, and with the priority of the version that scored them.
      const rows = await s.db.query<{ v: DbInt | null; priority: number | null }>(
        null,
        `SELECT priority_model_version AS v, priority FROM items WHERE desk_id = $1 AND text LIKE $2`,
        [desk.deskId, `a later post ${batch}-%`],
      );
      expect(rows).toHaveLength(15);
      for (const r of rows) {
        expect(Number(r.v)).toBe(current);
        expect(r.priority).not.toBeNull();
      }
    }
    // No retrain was needed for that.
    expect((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion).toBe(current);
  }, 180_000);
});

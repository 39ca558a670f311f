import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Prevalence } from '#models';
import { DATABASE_KINDS } from '../support/databases.js';
import {
  answerFromLabels,
  importRows,
  screeningDesk,
  SCREENING_CATEGORIES,
  type Answered,
} from '../support/labelled-desk.js';
import { startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const CATEGORIES = SCREENING_CATEGORIES;

/** Posted times spread over January and February 2026 (UTC), one every few hours, fixed by the item's number. */
const postedAt = (i: number) => new Date(Date.UTC(2026, 0, 1) + i * 5 * 3600_000);

describe.each(DATABASE_KINDS)('prevalence over time on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let deskId: number;
  const pool = syntheticPool(280, 31);
  const answered: Answered[] = [];

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    await s.user('aud', 'auditor');
    const reviewers = [await s.user('rev0', 'reviewer'), await s.user('rev1', 'reviewer')];
    deskId = await screeningDesk(s, sup, 'prevalence');
    // One item without a posted time: left out of by=posted, counted by=imported.
    const rows: Array<Record<string, unknown>> = pool.map((p, i) => ({
      text: p.text,
      external_id: p.externalId,
      ...(i === 0 ? {} : { created_at: postedAt(i).toISOString() }),
    }));
    await importRows(s, sup, deskId, rows);
    const labels = new Map(pool.map((p) => [p.externalId, p.label as string]));
    await answerFromLabels(s, deskId, reviewers, labels, (a) => a.length >= 150, answered);
    await new Promise((r) => setTimeout(r, 1000));
    await s.waitForQueuesIdle(180_000);
    await s.stopWorker();
  }, 400_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('gives each month’s share of each category with an interval that holds the true share', async () => {
    const r = await s.call<Prevalence>(sup, 'GET', `/api/desks/${deskId}/prevalence?period=month&by=posted`);
    expect(r.status).toBe(200);
    const p = r.body;
    expect(p.modelVersion).not.toBeNull();
    expect(p).toMatchObject({ period: 'month', by: 'posted', categories: CATEGORIES, undated: 1 });
    expect(p.approximation).toMatch(/uniform over the items open when it was drawn/);
    expect(p.periods.map((x) => x.start)).toEqual(['2026-01-01', '2026-02-01']);
    expect(p.periods.reduce((a, x) => a + x.items, 0)).toBe(pool.length - 1);

    const month = (i: number) => postedAt(i).toISOString().slice(0, 7);
    const index = new Map(pool.map((x, i) => [x.externalId, i]));
    const itemIndex = new Map<number, number>();
    for (const row of await s.db.query<{ id: number | string; external_id: string }>(
      null,
      'SELECT id, external_id FROM items WHERE desk_id = $1',
      [deskId],
    ))
      itemIndex.set(Number(row.id), index.get(row.external_id)!);
    // Months with at least one category's interval missing its true share.
    let monthsMissed = 0;
    for (const period of p.periods) {
      let missed = false;
      const members = pool.map((x, i) => ({ x, i })).filter(({ i }) => i > 0 && `${month(i)}-01` === period.start);
      expect(period.items).toBe(members.length);
      // The sample: random draws (with a category) of this month's items.
      const randoms = answered.filter((a) => a.draw === 'random' && itemIndex.get(a.itemId)! > 0);
      expect(period.randomVerdicts).toBe(
        randoms.filter((a) => `${month(itemIndex.get(a.itemId)!)}-01` === period.start).length,
      );
      for (const c of CATEGORIES) {
        const f = period.perCategory[c];
        expect(['ppi++', 'clopper-pearson']).toContain(f.method);
        expect(f.lower).toBeLessThanOrEqual(f.share!);
        expect(f.share!).toBeLessThanOrEqual(f.upper);
        const truth = members.filter(({ x }) => x.label === c).length / members.length;
        if (truth < f.lower - 1e-9 || truth > f.upper + 1e-9) missed = true;
      }
      if (missed) monthsMissed++;
    }
    // A month's three shares sum to one, so an estimate that is off puts two of them outside their intervals at once:
    // the six intervals are two correlated sets of three, not six independent chances. One month may miss (each holds
    // all three with a probability of about 0.9 or more); both missing would mean an estimate that is off, not bad luck.
    expect(monthsMissed).toBeLessThanOrEqual(1);
  });

  it('groups by week (Monday) or import day, exports CSV, and refuses unknown periods', async () => {
    const weeks = (await s.call<Prevalence>(sup, 'GET', `/api/desks/${deskId}/prevalence?period=week`)).body;
    expect(weeks.periods.every((x) => new Date(`${x.start}T00:00:00Z`).getUTCDay() === 1)).toBe(true);
    expect(weeks.periods[0].start).toBe('2025-12-29');
    const imported = (await s.call<Prevalence>(sup, 'GET', `/api/desks/${deskId}/prevalence?period=day&by=imported`))
      .body;
    expect(imported.undated).toBe(0);
    expect(imported.periods.reduce((a, x) => a + x.items, 0)).toBe(pool.length);

    const csv = await s.call(s.tokens.aud, 'GET', `/api/desks/${deskId}/prevalence.csv?period=month&raw=1`);
    expect(csv.status).toBe(200);
    const rows = parse<Record<string, string>>(csv.body as string, { columns: true });
    const month = (await s.call<Prevalence>(sup, 'GET', `/api/desks/${deskId}/prevalence?period=month`)).body;
    expect(rows).toHaveLength(month.periods.length * CATEGORIES.length);
    const feb = month.periods[1].perCategory.threat;
    const row = rows.find((x) => x.period_start === '2026-02-01' && x.category === 'threat')!;
    expect(Number(row.lower)).toBeCloseTo(feb.lower, 12);
    expect(row.method).toBe(feb.method);
    expect(Number(row.random_verdicts)).toBe(feb.randomVerdicts);

    for (const [q, pattern] of [
      ['period=year', /period: expected one of day, week, month/],
      ['by=read', /by: expected one of posted, imported/],
    ] as const) {
      const bad = await s.call(sup, 'GET', `/api/desks/${deskId}/prevalence?${q}`);
      expect(bad.status).toBe(400);
      expect(JSON.stringify(bad.body.message)).toMatch(pattern);
    }
    expect((await s.call(s.tokens.rev0, 'GET', `/api/desks/${deskId}/prevalence`)).status).toBe(403);
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Prevalence } from '#models';
import type { PrevalenceSection } from '#reports';
import { DATABASE_KINDS } from '../support/databases.js';
import { answerFromLabels, importRows, screeningDesk, SCREENING_CATEGORIES } from '../support/labelled-desk.js';
import { startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const CATEGORIES = SCREENING_CATEGORIES;
/** Report figures are rounded to 6 decimal places. */
const ROUNDED = 5e-7 + 1e-12;

/** Posted times over five weeks of 2026 (UTC), one every three hours, fixed by the item's number. */
const postedAt = (i: number) => new Date(Date.UTC(2026, 0, 5) + i * 3 * 3600_000);

describe.each(DATABASE_KINDS)('the prevalence in the oversight report on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let aud: string;
  let deskId: number;
  let version: number;
  const pool = syntheticPool(280, 53);

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    aud = await s.user('aud', 'auditor');
    const reviewers = [await s.user('rev0', 'reviewer'), await s.user('rev1', 'reviewer')];
    deskId = await screeningDesk(s, sup, 'report prevalence');
    // The first item has no posted time: left out of the weekly figures, and counted as such.
    await importRows(
      s,
      sup,
      deskId,
      pool.map((p, i) => ({
        text: p.text,
        external_id: p.externalId,
        ...(i === 0 ? {} : { created_at: postedAt(i).toISOString() }),
      })),
    );
    const labels = new Map(pool.map((p) => [p.externalId, p.label as string]));
    await answerFromLabels(s, deskId, reviewers, labels, (a) => a.length >= 150);
    // The last version is trained on every verdict, and its report written after them.
    await new Promise((r) => setTimeout(r, 1000));
    await s.waitForQueuesIdle(240_000);
    await s.stopWorker();
    version = (await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.currentModelVersion as number;
    expect(version).not.toBeNull();
  }, 500_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('states, for the current version, the weekly prevalence that /prevalence gives, with intervals, methods and random verdicts', async () => {
    const report = await s.call<{ prevalence: PrevalenceSection | null }>(
      aud,
      'GET',
      `/api/desks/${deskId}/models/${version}/report.json`,
    );
    expect(report.status).toBe(200);
    const r = report.body.prevalence!;
    expect(r).not.toBeNull();
    expect(r).toMatchObject({ modelVersion: version, period: 'week', by: 'posted', undated: 1 });
    const api = (await s.call<Prevalence>(aud, 'GET', `/api/desks/${deskId}/prevalence?period=week&by=posted`)).body;
    expect(r.method).toBe(api.method);
    expect(r.approximation).toBe(api.approximation);
    expect(r.periods.map((x) => x.start)).toEqual(api.periods.map((x) => x.start));
    expect(r.periods.length).toBeGreaterThanOrEqual(5);
    for (const [i, week] of r.periods.entries()) {
      const a = api.periods[i];
      expect({ items: week.items, randomVerdicts: week.randomVerdicts, decided: week.decided }).toEqual({
        items: a.items,
        randomVerdicts: a.randomVerdicts,
        decided: a.decided,
      });
      expect(week.perCategory.map((c) => c.category)).toEqual(CATEGORIES);
      for (const c of week.perCategory) {
        const e = a.perCategory[c.category];
        expect(c.method).toBe(e.method);
        expect(c.randomVerdicts).toBe(e.randomVerdicts);
        if (e.share === null) expect(c.share).toBeNull();
        else expect(Math.abs(c.share! - e.share)).toBeLessThanOrEqual(ROUNDED);
        expect(Math.abs(c.lower - e.lower)).toBeLessThanOrEqual(ROUNDED);
        expect(Math.abs(c.upper - e.upper)).toBeLessThanOrEqual(ROUNDED);
      }
    }
    // The weeks' items add up to the pool less the undated item.
    expect(r.periods.reduce((a, x) => a + x.items, 0)).toBe(pool.length - 1);
    // Random draws counted from the database, week by week.
    const draws = await s.db.query<{ external_id: string }>(
      null,
      `SELECT DISTINCT i.external_id FROM verdicts v JOIN items i ON i.id = v.item_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.undone_at IS NULL AND v.category_id IS NOT NULL`,
      [deskId],
    );
    const index = new Map(pool.map((p, i) => [p.externalId, i]));
    const monday = (t: Date) => {
      const d = new Date(Date.UTC(t.getUTCFullYear(), t.getUTCMonth(), t.getUTCDate()));
      d.setUTCDate(d.getUTCDate() - ((d.getUTCDay() + 6) % 7));
      return d.toISOString().slice(0, 10);
    };
    for (const week of r.periods) {
      const n = draws.filter((x) => {
        const i = index.get(x.external_id)!;
        return i > 0 && monday(postedAt(i)) === week.start;
      }).length;
      expect(week.randomVerdicts).toBe(n);
    }
  });

  it('draws it in the HTML report: a band and a line per category, and the table', async () => {
    const res = await fetch(`${s.base}/api/desks/${deskId}/models/${version}/report.html`, {
      headers: { authorization: `Bearer ${aud}` },
    });
    expect(res.status).toBe(200);
    const page = await res.text();
    const json = (
      await s.call<{ prevalence: PrevalenceSection }>(aud, 'GET', `/api/desks/${deskId}/models/${version}/report.json`)
    ).body.prevalence;
    expect(page).toContain('<h2>Prevalence by week</h2>');
    expect(page).toContain('class="chart prevalence"');
    for (const week of json.periods) expect(page).toContain(`<td>${week.start}</td><td class="num">${week.items}</td>`);
    const estimated = CATEGORIES.filter((c) =>
      json.periods.some((w) => w.perCategory.find((x) => x.category === c)!.share !== null),
    );
    expect(page.match(/<polygon class="band"/g) ?? []).toHaveLength(estimated.length);
  });

  it('gives each other version’s report either no prevalence or one under that version', async () => {
    const list = (await s.call(aud, 'GET', `/api/desks/${deskId}/reports`)).body.reports as Array<{
      version: number;
      status: string;
    }>;
    expect(list.length).toBeGreaterThan(1);
    for (const r of list.filter((x) => x.status === 'ready')) {
      const f = (await s.call(aud, 'GET', `/api/desks/${deskId}/models/${r.version}/report.json`)).body as {
        prevalence: PrevalenceSection | null;
      };
      if (f.prevalence !== null) expect(f.prevalence.modelVersion).toBe(r.version);
    }
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { answerFromLabels, importRows } from '../support/labelled-desk.js';
import { startStack, type Stack } from '../support/stack.js';

/**
 * Posts whose keyword matches are known by construction (seed terms: threat `hota*`, `hurt you`; harassment
 * `pathetic`), over three ISO weeks of November 2026, and the category a reviewer gives each: `d` is a keyword
 * match that is not a threat, `f` a threat without a keyword.
 */
const POSTS = [
  { id: 'a', text: 'Han hotar oss igen', created_at: '2026-11-02T09:00:00Z', label: 'threat' },
  { id: 'b', text: 'what a pathetic reply', created_at: '2026-11-04T12:00:00Z', label: 'harassment' },
  { id: 'c', text: 'the bins are late', created_at: '2026-11-05T08:00:00Z', label: 'ok' },
  { id: 'd', text: 'this song will hurt you, it is that sad', created_at: '2026-11-10T10:00:00Z', label: 'ok' },
  { id: 'e', text: 'De hotade grannen', created_at: '2026-11-15T23:30:00Z', label: 'threat' },
  { id: 'f', text: 'I know which house is yours', created_at: '2026-11-11T07:00:00Z', label: 'threat' },
  { id: 'g', text: 'pathetic. I will hurt you', created_at: '2026-11-16T00:10:00Z', label: 'harassment' },
  { id: 'h', text: 'parking again', created_at: '2026-11-18T18:00:00Z', label: 'ok' },
  { id: 'i', text: 'no date on this one', label: 'ok' },
];

describe.each(DATABASE_KINDS)('keyword counts over time on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let deskId = 0;

  beforeAll(async () => {
    s = await startStack(kind, { env: { TERMS_AFTER_SECONDS: '0' } });
    sup = await s.user('kc-sup', 'supervisor');
    await s.user('kc-aud', 'auditor');
    const rev = await s.user('kc-rev', 'reviewer');
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'keyword counts',
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['hota*', 'hurt you'], harassment: ['pathetic'] },
      randomShare: 1,
      secondOpinionShare: 0,
    });
    expect(d.status).toBe(201);
    deskId = d.body.id as number;
    await s.enrol(deskId);
    await importRows(
      s,
      sup,
      deskId,
      POSTS.map((p) => ({ external_id: p.id, text: p.text, ...(p.created_at ? { created_at: p.created_at } : {}) })),
    );
    const labels = new Map(POSTS.map((p) => [p.id, p.label]));
    const answered = await answerFromLabels(s, deskId, [rev], labels, (a) => a.length === POSTS.length);
    expect(answered.every((a) => a.draw === 'random')).toBe(true);
    await s.waitForQueuesIdle(120_000);
  }, 300_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  const get = (query: string, token = sup) => s.call(token, 'GET', `/api/desks/${deskId}/keyword-counts?${query}`);

  it('counts matching items per ISO week of posting, with precision and recall on the random draws', async () => {
    const r = await get('period=week&by=posted');
    expect(r.status).toBe(200);
    expect(r.body).toMatchObject({ period: 'week', by: 'posted', stale: false, itemsCounted: 9, undated: 1 });
    expect(r.body.categories).toEqual(['threat', 'harassment']);
    const weeks = r.body.periods as Array<{
      start: string;
      items: number;
      randomVerdicts: number;
      perCategory: Record<
        string,
        { matches: number; precision: { estimate: number | null }; recall: { estimate: number | null } }
      >;
    }>;
    expect(weeks.map((w) => [w.start, w.items, w.randomVerdicts])).toEqual([
      ['2026-11-02', 3, 3],
      ['2026-11-09', 3, 3],
      ['2026-11-16', 2, 2],
    ]);
    expect(weeks.map((w) => [w.perCategory.threat.matches, w.perCategory.harassment.matches])).toEqual([
      [1, 1],
      [2, 0],
      [1, 1],
    ]);
    // Week of 9 November: d matches but is not a threat, e matches and is, f is a threat without a keyword.
    expect(weeks[1].perCategory.threat.precision.estimate).toBe(0.5);
    expect(weeks[1].perCategory.threat.recall.estimate).toBe(0.5);
    expect(weeks[1].perCategory.harassment.precision).toMatchObject({ estimate: null, lower: 0, upper: 1, n: 0 });
    // Over all weeks: threat matches a, d, e, g (a and e threats); threats a, e, f (a and e match).
    const threat = r.body.total.perCategory.threat;
    expect(threat.matches).toBe(4);
    expect(threat.precision).toMatchObject({ estimate: 0.5, n: 4 });
    expect(threat.recall.n).toBe(3);
    expect(threat.recall.estimate).toBeCloseTo(2 / 3, 12);
    expect(threat.recall.lower).toBeLessThan(2 / 3);
    expect(threat.recall.upper).toBeGreaterThan(2 / 3);
    expect(r.body.total.perCategory.harassment.precision).toMatchObject({ estimate: 1, n: 2 });
    expect(r.body.total.randomVerdicts).toBe(8);
    expect(r.body.method).toMatch(/Wilson/);
  });

  it('sums by month, and by import day (every post was imported today)', async () => {
    const month = (await get('period=month')).body;
    expect(month.periods.map((p: { start: string; items: number }) => [p.start, p.items])).toEqual([['2026-11-01', 8]]);
    const imported = (await get('period=day&by=imported', s.tokens['kc-aud'])).body;
    expect(imported.periods).toHaveLength(1);
    expect(imported.periods[0]).toMatchObject({ items: 9, randomVerdicts: 9 });
    expect(imported.periods[0].perCategory.threat.matches).toBe(4);
  });

  it('refuses bad periods and reviewers, and says when the seed terms changed after the count', async () => {
    const bad = await get('period=year&by=sent');
    expect(bad.status).toBe(400);
    expect(String(bad.body.message)).toMatch(
      /period: expected one of day, week, month.*by: expected one of posted, imported/,
    );
    expect((await get('period=week', s.tokens['kc-rev'])).status).toBe(403);
    await s.stopWorker();
    const patched = await s.call(sup, 'PATCH', `/api/desks/${deskId}`, {
      seedTerms: { threat: ['hota*', 'hurt you', 'which house'], harassment: ['pathetic'] },
    });
    expect(patched.status).toBe(200);
    const r = (await get('period=week')).body;
    expect(r.stale).toBe(true);
    // The counts are the earlier terms'; precision and recall are measured with the terms as they are now.
    expect(r.total.perCategory.threat.matches).toBe(4);
    expect(r.total.perCategory.threat.recall.estimate).toBe(1);
  });
});

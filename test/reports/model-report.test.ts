import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clopperPearsonInterval, createRng } from '#learning';
import { JOBS, JobQueueService } from '#queues';
import { canonicalValue } from '#reports';
import { AgreementService } from '#verdicts';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const POOL = 1500;
const REVIEWERS = ['willow', 'ash', 'rowan', 'bramble'];
const TARGET = 0.9;
const CATEGORIES = ['threat', 'harassment', 'ok'];
const Z = 1.959963985;
/** Report figures are rounded to 6 decimal places: a recomputed value may differ by half a unit of the last. */
const ROUNDED = 5e-7 + 1e-12;
const HOSTILE_DESK = `Mossbank <script>alert("desk")</script> & <img src=x onerror=alert(1)> "Commons"`;
const HOSTILE_TERM = `<b onmouseover="alert('term')">bold</b>`;

/** Wilson score interval, written out here (Newcombe 1998, method 3) to check the report's figure independently of the library. */
function wilson(x: number, n: number) {
  const p = x / n;
  const centre = 2 * n * p + Z * Z;
  const half = Z * Math.sqrt(Z * Z + 4 * n * p * (1 - p));
  return {
    lower: Math.max(0, (centre - half) / (2 * (n + Z * Z))),
    upper: Math.min(1, (centre + half) / (2 * (n + Z * Z))),
  };
}

describe.each(DATABASE_KINDS)('the oversight report of a model version on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let aud: string;
  let deskId: number;
  const tokens: string[] = [];
  const labels = new Map<string, string>();
  let version = 0;
  let reportText = '';
  let report: any;

  beforeAll(async () => {
    // A short sweep interval, so the test of the sweep's report catch-up does not wait a minute.
    s = await startStack(kind, { env: { SWEEP_SECONDS: '2' } });
    sup = await s.user('sup', 'supervisor');
    aud = await s.user('oversight', 'auditor');
    for (const name of REVIEWERS) tokens.push(await s.user(name, 'reviewer'));
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: HOSTILE_DESK,
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['hurt', 'find you'], harassment: ['idiot'] },
      coverageTarget: TARGET,
      calibration: 'per-category',
      randomShare: 0.5,
      secondOpinionShare: 0.2,
      retrainEvery: 50,
      retrainAfterSeconds: 3,
    });
    expect(d.status).toBe(201);
    deskId = d.body.id;
    await s.enrol(deskId);
    const pool = syntheticPool(POOL, 11);
    for (const p of pool) labels.set(p.externalId, p.label);
    const imp = await s.call(
      sup,
      'POST',
      `/api/desks/${deskId}/imports`,
      pool.map((p) => JSON.stringify({ text: p.text, external_id: p.externalId })).join('\n'),
      { 'content-type': 'application/x-ndjson' },
    );
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      120_000,
    );

    // Simulated reviewers answer from the hidden labels (one in 25 abstains, one in 12 picks a category at random); a settings change with a hostile seed term lands on the way.
    const g = createRng(5);
    let randomShown = 0;
    let changed = false;
    let serial = 0;
    const published = async () =>
      (await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.models.filter(
        (m: { state: string }) => m.state === 'published',
      ).length;
    const work = async (done: () => Promise<boolean> | boolean) => {
      let stop = false;
      await Promise.all(
        tokens.map(async (token, r) => {
          while (!stop) {
            const l = await s.call(token, 'POST', `/api/desks/${deskId}/leases`);
            if (l.status === 204) return;
            expect(l.status).toBe(201);
            const u = g.next();
            const answer =
              u < 0.04
                ? { abstain: true }
                : { category: u < 0.12 ? CATEGORIES[Math.floor(g.next() * 3)] : labels.get(l.body.item.externalId)! };
            const v = await s.call(token, 'POST', `/api/desks/${deskId}/verdicts`, {
              leaseId: l.body.lease.id,
              itemId: l.body.item.id,
              clientId: `r${r}-${serial++}`,
              elapsedMs: 2000 + Math.floor(g.next() * 20_000),
              ...answer,
            });
            expect(v.status).toBe(201);
            if (l.body.prediction) {
              const [{ draw }] = await s.db.query<{ draw: string }>(null, 'SELECT draw FROM leases WHERE id = $1', [
                l.body.lease.id,
              ]);
              if (draw === 'random') randomShown++;
            }
            if (!changed && randomShown >= 30) {
              changed = true;
              expect(
                (
                  await s.call(sup, 'PATCH', `/api/desks/${deskId}`, {
                    seedTerms: { threat: ['hurt', 'find you', HOSTILE_TERM], harassment: ['idiot'] },
                  })
                ).status,
              ).toBe(200);
            }
            if (await done()) stop = true;
          }
        }),
      );
    };
    // Until a few versions exist and sets were shown with random draws.
    let n = 0;
    await work(async () => ++n % 20 === 0 && randomShown >= 60 && (await published()) >= 2);
    // Then a stretch without retraining, so the next version's period holds a known batch of verdicts…
    expect(
      (await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { retrainEvery: 100_000, retrainAfterSeconds: 86_400 }))
        .status,
    ).toBe(200);
    // Past the desk settings cache (2 s), so no verdict of the stretch is scheduled under the old settings; and every
    // retrain asked for under the old settings (due within seconds) has run and published before the stretch begins,
    // so the next version's period holds the whole stretch. Only a retrain due a day from now may wait.
    await new Promise((r) => setTimeout(r, 2100));
    await s.waitForQueuesIdle(180_000, { ignoreDelayedBeyondMs: 3_600_000 });
    const stretchStart = new Date();
    const start = randomShown;
    await work(() => randomShown >= start + 80);
    // …and one version learning from it. The retrain check of the stretch's last verdicts may run after the settings
    // change and ask for it; otherwise the next verdict finds enough new ones and asks for it at once.
    expect(
      (await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { retrainEvery: 50, retrainAfterSeconds: 3 })).status,
    ).toBe(200);
    await new Promise((r) => setTimeout(r, 2100));
    await s.waitForQueuesIdle(180_000, { ignoreDelayedBeyondMs: 3_600_000 });
    const since = async () =>
      (
        (await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.models as Array<{
          version: number;
          state: string;
          publishedAt: string | null;
        }>
      ).filter((m) => m.state === 'published' && Date.parse(m.publishedAt!) > stretchStart.getTime());
    if ((await since()).length === 0) {
      let one = 0;
      await work(() => ++one >= 1);
      await new Promise((r) => setTimeout(r, 1000));
      await s.waitForQueuesIdle(180_000);
    }
    const after = await since();
    expect(after).toHaveLength(1);
    version = after[0].version;
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.currentModelVersion).toBe(version);
    const res = await fetch(`${s.base}/api/desks/${deskId}/models/${version}/report.json`, {
      headers: { authorization: `Bearer ${aud}` },
    });
    expect(res.status).toBe(200);
    reportText = await res.text();
    report = JSON.parse(reportText);
    // The period began before the stretch: no version was published in the middle of it.
    expect(Date.parse(report.period.from)).toBeLessThanOrEqual(stretchStart.getTime());
  }, 600_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('states the version, its period and the settings in force', async () => {
    const models = (await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.models as Array<{
      version: number;
      parentVersion: number | null;
      publishedAt: string;
      createdAt: string;
      state: string;
    }>;
    const v = models.find((m) => m.version === version)!;
    expect(v.parentVersion).not.toBeNull();
    const parent = models.find((m) => m.version === v.parentVersion)!;
    expect(report.desk).toEqual({ id: deskId, name: HOSTILE_DESK, categories: ['threat', 'harassment', 'ok'] });
    expect(report.version).toMatchObject({
      version,
      parentVersion: parent.version,
      createdAt: v.createdAt,
      publishedAt: v.publishedAt,
    });
    expect(report.period).toEqual({ from: parent.publishedAt, to: v.publishedAt, startsAt: 'parent-published' });
    expect(report.settings).toEqual({
      coverageTarget: TARGET,
      calibration: 'per-category',
      score: 'lac',
      strategy: 'entropy',
      randomShare: 0.5,
      secondOpinionShare: 0.2,
    });
    // Every published version up to this one is on the learning curve.
    expect(report.learningCurve.map((p: { version: number }) => p.version)).toEqual(
      models
        .filter((m) => m.state === 'published' && m.version <= version)
        .map((m) => m.version)
        .sort((a, b) => a - b),
    );
  });

  it('holds the training and calibration counts per category of the version', async () => {
    const detail = (await s.call(aud, 'GET', `/api/desks/${deskId}/models/${version}`)).body;
    for (const [key, set] of [
      ['training', detail.training],
      ['calibration', detail.calibration],
    ] as const) {
      expect(report[key].perCategory).toEqual(
        ['threat', 'harassment', 'ok'].map((category) => ({ category, verdicts: set.counts[category] ?? 0 })),
      );
      expect(report[key].total).toBe(set.items.length);
    }
  });

  it("holds the realized coverage of the period's random checks with Wilson and Clopper–Pearson bounds, recomputed from the trail", async () => {
    const { from, to } = report.period;
    const rows = await s.db.query<{ name: string; shown_set: string }>(
      null,
      `SELECT c.name, v.shown_set FROM verdicts v JOIN categories c ON c.id = v.category_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.shown_set IS NOT NULL AND v.undone_at IS NULL AND v.created_at > $2 AND v.created_at <= $3`,
      [deskId, s.db.time(new Date(from)), s.db.time(new Date(to))],
    );
    expect(rows.length).toBeGreaterThan(0);
    const check = (got: any, list: typeof rows) => {
      const x = list.filter((r) => (JSON.parse(r.shown_set) as string[]).includes(r.name)).length;
      expect(got.checks).toBe(list.length);
      expect(got.covered).toBe(x);
      if (list.length === 0) {
        expect(got.coverage).toBeNull();
        return;
      }
      expect(Math.abs(got.coverage - x / list.length)).toBeLessThanOrEqual(ROUNDED);
      const w = wilson(x, list.length);
      expect(Math.abs(got.wilson.lower - w.lower)).toBeLessThanOrEqual(ROUNDED);
      expect(Math.abs(got.wilson.upper - w.upper)).toBeLessThanOrEqual(ROUNDED);
      // The library's exact interval, itself checked against Newcombe (1998) Table I in its unit tests.
      const cp = clopperPearsonInterval(x, list.length);
      expect(Math.abs(got.clopperPearson.lower - cp.lower)).toBeLessThanOrEqual(ROUNDED);
      expect(Math.abs(got.clopperPearson.upper - cp.upper)).toBeLessThanOrEqual(ROUNDED);
      // No order between the widths is asserted: near 0 or 1 Wilson's interval can be the wider one.
    };
    check(report.coverage.overall, rows);
    for (const c of report.coverage.perCategory)
      check(
        c,
        rows.filter((r) => r.name === c.category),
      );
    expect(report.coverage.promised).toBe(TARGET);
  });

  it('holds the share of sure, ambiguous and unfamiliar calls over the pool, recomputed from the stored predictions and thresholds', async () => {
    const detail = (await s.call(aud, 'GET', `/api/desks/${deskId}/models/${version}`)).body;
    const q = (detail.thresholds.thresholds as Array<{ threshold: number | null }>).map((t) =>
      t.threshold === null ? Infinity : t.threshold,
    );
    const preds = await s.db.query<{ probabilities: string }>(
      null,
      'SELECT probabilities FROM predictions WHERE desk_id = $1 AND model_version = $2',
      [deskId, version],
    );
    const calls = { sure: 0, ambiguous: 0, unfamiliar: 0 };
    const sizes = [0, 0, 0, 0];
    for (const r of preds) {
      // LAC under per-category calibration: category c is in the set when 1 − p_c ≤ q̂_c (the same 1e-12 slack as the library's).
      const size = (JSON.parse(r.probabilities) as number[]).filter((p, c) => 1 - p <= q[c] + 1e-12).length;
      sizes[size]++;
      calls[size === 0 ? 'unfamiliar' : size === 1 ? 'sure' : 'ambiguous']++;
    }
    expect(report.pool.items).toBe(preds.length);
    for (const call of ['sure', 'ambiguous', 'unfamiliar'] as const) {
      expect(report.pool.calls[call].items).toBe(calls[call]);
      expect(Math.abs(report.pool.calls[call].share - calls[call] / preds.length)).toBeLessThanOrEqual(ROUNDED);
    }
    expect(report.pool.setSizes.map((x: { items: number }) => x.items)).toEqual(sizes);
  });

  it("holds the reviewers' activity of the period, by name, and the settings change with who made it", async () => {
    const { from, to } = report.period;
    const rows = await s.db.query<{ name: string; n: number | string; abstained: number | string }>(
      null,
      `SELECT u.name, COUNT(*) AS n, SUM(CASE WHEN v.abstain THEN 1 ELSE 0 END) AS abstained FROM verdicts v JOIN users u ON u.id = v.reviewer_id
       WHERE v.desk_id = $1 AND v.undone_at IS NULL AND v.created_at > $2 AND v.created_at <= $3 GROUP BY u.name`,
      [deskId, s.db.time(new Date(from)), s.db.time(new Date(to))],
    );
    const expected = rows
      .map((r) => ({ name: r.name, verdicts: Number(r.n), abstained: Number(r.abstained) }))
      .sort((a, b) => (a.name < b.name ? -1 : 1));
    expect(report.activity.order).toBe('name');
    expect(
      report.activity.reviewers.map(({ name, verdicts, abstained }: any) => ({ name, verdicts, abstained })),
    ).toEqual(expected);
    expect(report.activity.verdicts).toBe(expected.reduce((a, r) => a + r.verdicts, 0));
    for (const r of report.activity.reviewers) expect(r.medianSeconds).toBeGreaterThanOrEqual(2);
    const changes =
      report.learningCurve.length >= 1
        ? (
            await Promise.all(
              report.learningCurve.map(async (p: { version: number }) => {
                const r = await fetch(`${s.base}/api/desks/${deskId}/models/${p.version}/report.json`, {
                  headers: { authorization: `Bearer ${sup}` },
                });
                return r.status === 200
                  ? (
                      (await r.json()) as {
                        settingsChanges: Array<{ actor: string; after: { seedTerms?: { threat?: string[] } } }>;
                      }
                    ).settingsChanges
                  : [];
              }),
            )
          ).flat()
        : [];
    // The seed-term change was made in the period of exactly one version.
    expect(changes.filter((c) => c.after.seedTerms?.threat?.includes(HOSTILE_TERM))).toHaveLength(1);
    expect(changes.find((c) => c.after.seedTerms)!.actor).toBe('sup');
  });

  it('holds the agreement figures of the AgreementService as the verdicts stood at publication', async () => {
    const to = new Date(report.version.publishedAt);
    const rows = await s.db.query<{ item_id: number }>(
      null,
      `SELECT item_id FROM verdicts WHERE desk_id = $1 AND category_id IS NOT NULL AND created_at <= $2 AND (undone_at IS NULL OR undone_at > $2) GROUP BY item_id HAVING COUNT(*) >= 2`,
      [deskId, s.db.time(to)],
    );
    expect(rows.length).toBeGreaterThan(0);
    expect(report.agreement.items).toBe(rows.length);
    expect(report.agreement.krippendorff.alpha).not.toBeNull();
    expect(report.agreement).toEqual(canonicalValue(await s.api.get(AgreementService).forDesk(deskId, to)));
  });

  it('gives byte-identical JSON when the job runs again for the same version, even after later changes', async () => {
    const list = async () =>
      (await s.call(aud, 'GET', `/api/desks/${deskId}/reports`)).body.reports as Array<{
        version: number;
        status: string;
        generatedAt: string;
        figuresSha256: string;
      }>;
    const before = (await list()).find((r) => r.version === version)!;
    expect(before.status).toBe('ready');
    // Later events must not change the figures: another target, more verdicts (and the version they bring). Second
    // opinions due are served first and teach the model nothing, so the reviewer goes on until a first draw is decided.
    expect(
      (await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { coverageTarget: 0.8, secondOpinionShare: 0 })).status,
    ).toBe(200);
    for (let late = 0; ; late++) {
      expect(late).toBeLessThan(100);
      const l = await s.call(tokens[0], 'POST', `/api/desks/${deskId}/leases`);
      expect(l.status).toBe(201);
      expect(
        (
          await s.call(tokens[0], 'POST', `/api/desks/${deskId}/verdicts`, {
            leaseId: l.body.lease.id,
            itemId: l.body.item.id,
            clientId: `late-${late}`,
            category: labels.get(l.body.item.externalId)!,
          })
        ).status,
      ).toBe(201);
      const [{ draw }] = await s.db.query<{ draw: string }>(null, 'SELECT draw FROM leases WHERE id = $1', [
        l.body.lease.id,
      ]);
      if (draw !== 'second-opinion') break;
    }
    await new Promise((r) => setTimeout(r, 1000));
    await s.waitForQueuesIdle(120_000);
    // A newer version is current now and this version's predictions are gone: the pool figures are kept from the first run.
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/models`)).body.currentModelVersion).toBeGreaterThan(version);
    expect(
      await s.db.query(null, 'SELECT item_id FROM predictions WHERE desk_id = $1 AND model_version = $2 LIMIT 1', [
        deskId,
        version,
      ]),
    ).toEqual([]);
    await s.api.get(JobQueueService).add(JOBS.writeReport, { deskId, version });
    await s.waitForQueuesIdle(60_000);
    const after = (await list()).find((r) => r.version === version)!;
    expect(after.generatedAt).not.toBe(before.generatedAt);
    const again = await fetch(`${s.base}/api/desks/${deskId}/models/${version}/report.json`, {
      headers: { authorization: `Bearer ${aud}` },
    });
    expect(await again.text()).toBe(reportText);
    expect(after.figuresSha256).toBe(before.figuresSha256);
    await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { coverageTarget: TARGET, secondOpinionShare: 0.2 });
  }, 180_000);

  it('renders in headless Chromium with its charts, makes no external request, and prints to A4', async () => {
    const url = `${s.base}/api/desks/${deskId}/models/${version}/report.html`;
    const profile = mkdtempSync(join(tmpdir(), 'cribra-chromium-'));
    const context = await chromium.launchPersistentContext(profile, {
      executablePath: '/usr/bin/chromium',
      args: [
        '--headless',
        '--no-sandbox',
        '--disable-gpu',
        '--disable-background-networking',
        '--disable-component-update',
        '--disable-sync',
        '--no-first-run',
      ],
      extraHTTPHeaders: { authorization: `Bearer ${aud}` },
    });
    try {
      const page = await context.newPage();
      const requests: string[] = [];
      page.on('request', (r) => requests.push(r.url()));
      const res = await page.goto(url, { waitUntil: 'load' });
      expect(res?.status()).toBe(200);
      expect(await page.title()).toBe(`Model report: ${HOSTILE_DESK}, version ${version}`);
      expect(await page.locator('script').count()).toBe(0);
      expect(await page.locator('h1').textContent()).toContain(HOSTILE_DESK);
      const charts = page.locator('svg.chart');
      expect(await charts.count()).toBe(2);
      for (const name of ['reliability', 'learning-curve']) {
        const chart = page.locator(`svg.chart.${name}`);
        const box = await chart.boundingBox();
        expect(box!.width).toBeGreaterThan(100);
        expect(box!.height).toBeGreaterThan(50);
        for (const axis of ['.x-axis > line', '.y-axis > line']) {
          const b = await chart.locator(axis).first().boundingBox();
          expect(b!.width + b!.height).toBeGreaterThan(50);
        }
        const axisLabels = await chart.locator('.axis-label').allTextContents();
        expect(axisLabels).toHaveLength(2);
        expect(axisLabels.every((t) => t.length > 3)).toBe(true);
        expect(await chart.locator('.x-axis text').count()).toBeGreaterThan(2);
        const data = await chart.locator('.data > *').count();
        expect(data).toBeGreaterThan(0);
        const dataBox = await chart.locator('.data').boundingBox();
        expect(dataBox!.width * dataBox!.height).toBeGreaterThan(0);
      }
      expect(await page.locator('svg.reliability .diagonal').count()).toBe(1);
      const pdf = await page.pdf({ format: 'A4' });
      expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
      expect(pdf.length).toBeGreaterThan(10_000);
      expect(requests).toEqual([url]);
    } finally {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    }
  }, 120_000);

  it('lets supervisors and auditors read reports, refuses reviewers, and explains a missing one', async () => {
    const paths = [
      `/api/desks/${deskId}/reports`,
      `/api/desks/${deskId}/models/${version}/report.json`,
      `/api/desks/${deskId}/models/${version}/report.html`,
    ];
    for (const p of paths) {
      expect((await s.call(tokens[0], 'GET', p)).status).toBe(403);
      expect((await s.call(sup, 'GET', p)).status).toBe(200);
      expect((await s.call(aud, 'GET', p)).status).toBe(200);
    }
    const html = await s.call(aud, 'GET', paths[2]);
    expect(html.headers.get('content-type')).toMatch(/^text\/html/);
    expect(html.headers.get('content-security-policy')).toMatch(/default-src 'none'/);
    const unknown = await s.call(aud, 'GET', `/api/desks/${deskId}/models/999/report.json`);
    expect(unknown.status).toBe(404);
    expect(unknown.body.message).toBe(`desk ${deskId} has no model version 999`);
    expect((await s.call(aud, 'GET', `/api/desks/99999/models/1/report.html`)).status).toBe(404);
    for (const bad of ['abc', '0', '1.5']) {
      const r = await s.call(aud, 'GET', `/api/desks/${deskId}/models/${bad}/report.json`);
      expect(r.status).toBe(400);
      expect(r.body.message).toBe('version: expected a whole number from 1');
    }
    // While a report is being written, the 404 says so.
    const [stored] = await s.db.query<{ figures: string; html: string; figures_sha256: string; generated_at: unknown }>(
      null,
      'SELECT figures, html, figures_sha256, generated_at FROM model_reports WHERE desk_id = $1 AND version = $2',
      [deskId, version],
    );
    await s.db.query(
      null,
      `UPDATE model_reports SET state = 'writing', figures = NULL, html = NULL, figures_sha256 = NULL, generated_at = NULL WHERE desk_id = $1 AND version = $2`,
      [deskId, version],
    );
    const writing = await s.call(aud, 'GET', paths[1]);
    expect(writing.status).toBe(404);
    expect(writing.body.message).toMatch(/still being written/);
    expect(
      (await s.call(aud, 'GET', paths[0])).body.reports.find((r: { version: number }) => r.version === version).status,
    ).toBe('writing');
    await s.db.query(
      null,
      `UPDATE model_reports SET state = 'ready', figures = $3, html = $4, figures_sha256 = $5, generated_at = $6 WHERE desk_id = $1 AND version = $2`,
      [deskId, version, stored.figures, stored.html, stored.figures_sha256, stored.generated_at],
    );
    // A report job for a version that does not exist gives up at once and writes nothing.
    await s.api.get(JobQueueService).add(JOBS.writeReport, { deskId, version: 999 });
    await s.waitForQueuesIdle(30_000);
    expect(
      await s.db.query(null, 'SELECT id FROM model_reports WHERE desk_id = $1 AND version = 999', [deskId]),
    ).toEqual([]);
    expect((await s.call(aud, 'GET', `/api/desks/${deskId}/models/999/report.json`)).body.message).toBe(
      `desk ${deskId} has no model version 999`,
    );
    // A published version whose report is missing (its job lost) gets one from the periodic sweep; its predictions are gone by now, and the report says so.
    await s.db.query(null, 'DELETE FROM model_reports WHERE desk_id = $1 AND version = 1', [deskId]);
    const again = await eventually(
      async () => {
        const r = await s.call(aud, 'GET', `/api/desks/${deskId}/models/1/report.json`);
        return r.status === 200 ? r.body : undefined;
      },
      // The sweep runs every 2 s; a machine busy with other work may hold the job queue far longer.
      90_000,
      'the sweep to write the missing report',
    );
    expect(again.version.version).toBe(1);
    expect(again.pool).toBeNull();
    // The database refuses a ready report without its files.
    await expect(
      s.db.query(null, `UPDATE model_reports SET figures = NULL WHERE desk_id = $1 AND version = $2`, [
        deskId,
        version,
      ]),
    ).rejects.toThrow(/ck_model_reports_ready|CHECK/i);
    // Room for the sweep's wait above on a busy machine.
  }, 150_000);
});

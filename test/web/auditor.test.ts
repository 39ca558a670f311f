import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { PASSWORD, webDesk, type WebDesk } from '../support/web-desk.js';

/**
 * Every control on the page that could send something other than a read:
 * buttons other than signing out and the trail's filter and paging, any
 * form that is not a search, file pickers, sliders, radio buttons, check
 * boxes, text areas.
 */
async function writeControls(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const found: string[] = [];
    for (const b of Array.from(document.querySelectorAll('button'))) {
      const t = b.textContent.trim();
      // Menu opens the navigation on narrow screens (hidden on wide ones); it changes no data.
      // Show text reads an item's text (recorded in the audit trail as a read); it changes no data.
      if (!['Sign out', 'Menu', 'Filter', 'Older verdicts', 'More', 'Show text'].includes(t))
        found.push(`button “${t}”`);
    }
    for (const f of Array.from(document.querySelectorAll('form')))
      if (f.getAttribute('role') !== 'search') found.push('a form that is not a search');
    for (const i of Array.from(
      document.querySelectorAll(
        'input[type=file], input[type=range], input[type=radio], input[type=checkbox], textarea',
      ),
    ))
      found.push(`${i.tagName.toLowerCase()} ${(i as HTMLInputElement).type}`);
    return found;
  });
}

describe.each(DATABASE_KINDS)('the auditor screens on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  let b: Browser;

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 300, verdicts: 90 });
    b = await openBrowser(s.base);
  }, 180_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('reads model versions, one version in detail and the decision trail, and finds no control that changes data', async () => {
    const { page } = b;
    await signIn(page, s.base, 'ada', PASSWORD);
    await expect(writeControls(page)).resolves.toEqual([]);
    await page.getByRole('link', { name: 'Mossbank Commons' }).click();
    await page.waitForURL(`${s.base}/desks/${desk.deskId}/models`);
    const table = page.locator('table.models-table');
    await table.waitFor();
    const models = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/models`)).body;
    await expect(table.locator('tbody tr').count()).resolves.toBe(models.models.length);
    await expect(writeControls(page)).resolves.toEqual([]);
    // A version measured on fewer than 30 calibration verdicts is marked "too few", the others are not; the first
    // versions of this desk, trained on its first verdicts, have only a handful.
    const few = (m: { metrics: { n: number } | null }) => m.metrics !== null && m.metrics.n < 30;
    expect(models.models.some(few)).toBe(true);
    for (const m of models.models as { version: number; metrics: { n: number } | null }[]) {
      const row = table
        .locator('tbody tr')
        .filter({ has: page.getByRole('link', { name: `v${m.version}`, exact: true }) });
      await expect(row.locator('.too-few').count()).resolves.toBe(few(m) ? 1 : 0);
    }

    // Each published version's oversight report is listed once written.
    const current = models.currentModelVersion as number;
    await eventually(
      async () =>
        (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/reports`)).body.reports.find(
          (r: { version: number; status: string }) => r.version === current,
        )?.status === 'ready'
          ? true
          : undefined,
      60_000,
      'the report',
    );
    await page.reload();
    const reportLink = table
      .locator('tbody tr')
      .filter({ hasText: `v${current}` })
      .getByRole('link', { name: 'HTML' });
    await reportLink.waitFor();
    const href = await reportLink.getAttribute('href');
    expect(href).toBe(`/api/desks/${desk.deskId}/models/${current}/report.html`);
    const report = await page.request.get(`${s.base}${href}`);
    expect(report.status()).toBe(200);
    expect(await report.text()).toContain('<svg');

    await page.getByRole('link', { name: `v${current}`, exact: true }).click();
    await page.waitForURL(`${s.base}/desks/${desk.deskId}/models/${current}`);
    await page.getByRole('heading', { name: `Model version ${current}` }).waitFor();
    await page.getByRole('heading', { name: 'Promised and realized coverage' }).waitFor();
    // Counts behind the version, as the API has them.
    const detail = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/models/${current}`)).body;
    // Accuracy comes with its Wilson interval, and the heading says when the set is too small.
    await expect(page.locator('dl.figures').first().innerText()).resolves.toMatch(
      /95 % interval 0\.\d\d to [01]\.\d\d/,
    );
    await expect(page.locator('h2 .too-few').count()).resolves.toBe(detail.metrics.n < 30 ? 1 : 0);
    const rows = await page.locator('table.data tbody tr').allInnerTexts();
    expect(rows[0]).toMatch(
      new RegExp(`^threat\\s+${detail.training.counts.threat}\\s+${detail.calibration.counts.threat}`),
    );
    // The set-size chart is drawn with its axis title and one bar per possible size.
    await page.locator('svg.chart').first().waitFor();
    const sizeBars = page.locator('svg.chart').filter({ hasText: 'open items' }).locator('g.bar');
    await expect(sizeBars.count()).resolves.toBe(4);
    await expect(writeControls(page)).resolves.toEqual([]);

    await page.getByRole('link', { name: 'Agreement', exact: true }).click();
    await page.getByRole('heading', { name: 'Items to settle' }).waitFor();
    await expect(writeControls(page)).resolves.toEqual([]);
    await page.getByRole('link', { name: 'Trail', exact: true }).click();
    await page.waitForURL(`${s.base}/desks/${desk.deskId}/trail`);
    const trail = page.locator('table.trail tbody tr');
    const all = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/verdicts?limit=1000`)).body.verdicts.length;
    expect(all).toBe(90);
    await page.waitForFunction((n) => document.querySelectorAll('table.trail tbody tr').length === n, all);
    await expect(writeControls(page)).resolves.toEqual([]);

    // Filter by category: only that category's verdicts remain, as the API counts them.
    await page.getByLabel('Category').selectOption('threat');
    await page.getByRole('button', { name: 'Filter' }).click();
    await page.waitForURL(/category=threat/);
    const threat = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/verdicts?category=threat&limit=1000`)).body
      .verdicts.length;
    await page.waitForFunction((n) => document.querySelectorAll('table.trail tbody tr').length === n, threat);
    for (const r of await trail.allInnerTexts()) expect(r.split('\t')[3]).toBe('threat');
    // A date range that holds no verdict empties the table and says so.
    await page.goto(`${s.base}/desks/${desk.deskId}/trail?from=2001-01-01&to=2001-01-31`);
    await page.getByText('No verdict matches these filters.').waitFor();
    await page.goto(`${s.base}/desks/${desk.deskId}/trail?reviewer=robin`);
    await page.waitForFunction((n) => document.querySelectorAll('table.trail tbody tr').length === n, all);
    expect(b.foreign).toEqual([]);
  });

  it('is refused the supervisor screens, and the API refuses the writes', async () => {
    const { page } = b;
    for (const path of [
      `/desks/${desk.deskId}`,
      `/desks/${desk.deskId}/coverage`,
      `/desks/${desk.deskId}/import`,
      `/desks/${desk.deskId}/queue`,
    ]) {
      await page.goto(`${s.base}${path}`);
      await page.getByRole('alert').filter({ hasText: 'Not open to your role' }).waitFor();
    }
    const auditor = s.tokens.ada;
    expect((await s.call(auditor, 'PATCH', `/api/desks/${desk.deskId}`, { coverageTarget: 0.8 })).status).toBe(403);
    expect((await s.call(auditor, 'POST', `/api/desks/${desk.deskId}/leases`)).status).toBe(403);
  });

  it('a bad date in the trail filter gets a clear message', async () => {
    const { page } = b;
    await page.goto(`${s.base}/desks/${desk.deskId}/trail?from=2026-02-30`);
    // (February has no 30th.)
    await expect(page.getByRole('alert').innerText()).resolves.toContain(
      'from: expected an ISO 8601 date or date-time',
    );
  });
});

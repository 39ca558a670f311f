import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { startStack, type Stack } from '../support/stack.js';
import { PASSWORD, webDesk, type WebDesk } from '../support/web-desk.js';

const SIZES = [
  { width: 390, height: 844 },
  { width: 1280, height: 800 },
] as const;

/** ISO 8601 to the second, UTC: the trail's one format for times. */
const ISO_TIME = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z$/;

async function rowCount(page: Page, n: number): Promise<void> {
  await page.waitForFunction((k) => document.querySelectorAll('table.trail tbody tr').length === k, n);
}

describe.each(DATABASE_KINDS)('the auditable trail and the plain readings on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  let b: Browser;
  let morgan = '';

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 200, verdicts: 40 });
    morgan = await s.user('morgan.hale', 'reviewer', PASSWORD);
    await s.enrol(desk.deskId, ['morgan.hale']);
    for (let i = 0; i < 3; i++) {
      const l = await s.call(morgan, 'POST', `/api/desks/${desk.deskId}/leases`);
      expect(l.status).toBe(201);
      const v = await s.call(morgan, 'POST', `/api/desks/${desk.deskId}/verdicts`, {
        leaseId: l.body.lease.id,
        itemId: l.body.item.id,
        category: desk.labels.get(l.body.item.externalId),
        clientId: `morgan-${i}`,
      });
      expect(v.status).toBe(201);
    }
    b = await openBrowser(s.base);
    await signIn(b.page, s.base, 'ada', PASSWORD);
  }, 180_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  const reads = async (itemId: number): Promise<number> =>
    (await s.call(desk.sup, 'GET', `/api/audit?deskId=${desk.deskId}&limit=1000`)).body.events.filter(
      (e: { action: string; entityId: string; actor: string }) =>
        e.action === 'item.read' && e.entityId === String(itemId) && e.actor === 'ada',
    ).length;

  for (const size of SIZES) {
    it(`at ${size.width}×${size.height}: draws, ISO times, item links, text on request (click and key), partial reviewer names`, async () => {
      const { page } = b;
      await page.setViewportSize(size);
      const api = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/verdicts?limit=1000`)).body.verdicts as {
        id: number;
        itemId: number;
        draw: string;
        reviewer: string;
      }[];
      await page.goto(`${s.base}/desks/${desk.deskId}/trail`);
      await rowCount(page, api.length);
      const rows = page.locator('table.trail tbody tr');
      // Columns: time, reviewer, item, verdict, draw, model, time taken, note, text.
      const cells = await rows.evaluateAll((trs) =>
        trs.map((tr) => Array.from(tr.querySelectorAll('td')).map((td) => td.textContent.trim())),
      );
      expect(cells.map((c) => c[4])).toEqual(api.map((v) => v.draw));
      for (const c of cells) expect(c[0]).toMatch(ISO_TIME);
      const firstLink = rows.first().getByRole('link', { name: String(api[0].itemId), exact: true });
      await expect(firstLink.getAttribute('href')).resolves.toBe(`/desks/${desk.deskId}/items/${api[0].itemId}`);
      // The date filters take and show ISO 8601 days.
      await expect(page.getByLabel('From (YYYY-MM-DD, UTC)').getAttribute('placeholder')).resolves.toBe('YYYY-MM-DD');

      // The text shows only when asked for, and each reading is in the audit trail: by a click…
      const first = api[0].itemId;
      const before = await reads(first);
      await expect(rows.first().locator('.item-text').count()).resolves.toBe(0);
      await rows.first().getByRole('button', { name: 'Show text' }).click();
      await rows.first().locator('.item-text').waitFor();
      await expect(reads(first)).resolves.toBe(before + 1);
      // …or by `t` on a row whose link has the focus.
      const second = api[1].itemId;
      const beforeSecond = await reads(second);
      await rows
        .nth(1)
        .getByRole('link', { name: String(second), exact: true })
        .focus();
      await page.keyboard.press('t');
      await rows.nth(1).locator('.item-text').waitFor();
      await expect(reads(second)).resolves.toBe(beforeSecond + 1);

      // Part of a name, any case, with the reviewers offered as suggestions.
      const suggestions = await page
        .locator('#trail-reviewers option')
        .evaluateAll((os) => os.map((o) => (o as HTMLOptionElement).value));
      expect(suggestions).toEqual(['morgan.hale', 'robin']);
      await page.getByLabel('Reviewer (part of the name)').fill('HAL');
      await page.getByRole('button', { name: 'Filter' }).click();
      await page.waitForURL(/reviewer=HAL/);
      await rowCount(page, 3);
      for (const r of await rows.allInnerTexts()) expect(r.split('\t')[1]).toBe('morgan.hale');

      // The item page: its verdicts with their draws, the current version's call, the text on request.
      await rows.first().getByRole('link').first().click();
      const itemId = Number(/\/items\/(\d+)$/.exec(page.url())![1]);
      await page.getByRole('heading', { name: `Item ${itemId}` }).waitFor();
      const record = (await s.call(desk.sup, 'GET', `/api/items/${itemId}`)).body;
      await page.locator('table.item-verdicts tbody tr').first().waitFor();
      await expect(page.locator('table.item-verdicts tbody tr').count()).resolves.toBe(record.verdicts.length);
      await expect(page.locator('table.item-verdicts tbody tr td').nth(3).innerText()).resolves.toContain(
        record.verdicts[0].draw,
      );
      await expect(page.locator('table.item-calls tbody tr').count()).resolves.toBe(record.calls.length);
      expect(record.calls.some((c: { current: boolean }) => c.current)).toBe(true);
      const beforeItem = await reads(itemId);
      await page.getByRole('button', { name: 'Show text' }).click();
      await page.locator('.item-text-shown .item-text').waitFor();
      await expect(reads(itemId)).resolves.toBe(beforeItem + 1);
      // Nothing reaches past the right edge: tables scroll in their own box.
      const wide = await page.evaluate(
        () => document.documentElement.scrollWidth > document.documentElement.clientWidth,
      );
      expect(wide).toBe(false);
      expect(b.foreign).toEqual([]);
    }, 120_000);
  }

  it('an erased item’s page says when it was erased, and its text cannot be shown', async () => {
    const { page } = b;
    const verdicts = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/verdicts?limit=1000`)).body.verdicts;
    const itemId = verdicts.at(-1).itemId as number;
    const erased = await s.call(desk.sup, 'POST', `/api/desks/${desk.deskId}/erasures`, {
      itemIds: [itemId],
      reason: 'asked by the writer',
    });
    expect(erased.status).toBe(201);
    const record = (await s.call(desk.sup, 'GET', `/api/items/${itemId}`)).body;
    for (const size of SIZES) {
      await page.setViewportSize(size);
      await page.goto(`${s.base}/desks/${desk.deskId}/items/${itemId}`);
      const notice = page.locator('.erased-notice');
      await notice.waitFor();
      await expect(notice.innerText()).resolves.toContain(
        `Erased on ${new Date(record.erasedAt as string).toISOString().slice(0, 19)}Z`,
      );
      await expect(page.getByRole('button', { name: 'Show text' }).count()).resolves.toBe(0);
    }
  });

  it('sets plain words beside the figures and links every screen to the glossary', async () => {
    const { page } = b;
    for (const size of SIZES) {
      await page.setViewportSize(size);
      const current = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
      await page.goto(`${s.base}/desks/${desk.deskId}/models/${current}`);
      await page.getByRole('heading', { name: /Quality on the calibration set/ }).waitFor();
      const figures = await page.locator('dl.figures > div').allInnerTexts();
      expect(figures.find((f) => f.startsWith('Macro-F1'))).toMatch(/rare ones weighing as much as common ones/);
      expect(figures.find((f) => f.startsWith('Expected calibration error'))).toMatch(/0 is perfectly calibrated/);
      expect(figures.find((f) => f.startsWith('Brier'))).toMatch(/lower is better/);
      expect(figures.find((f) => f.startsWith('Log loss'))).toMatch(/confident mistakes/);
      await page.goto(`${s.base}/desks/${desk.deskId}/models`);
      await page.getByRole('heading', { name: /How to read the figures/ }).waitFor();
      // The glossary, from the footer of any screen.
      await page.getByRole('link', { name: /^Glossary/ }).click();
      await page.waitForURL(`${s.base}/glossary`);
      await page.getByRole('heading', { name: 'Glossary' }).waitFor();
      const text = await page.locator('main').innerText();
      for (const term of ['prediction set', 'draw', 'macro-F1', 'Brier score', "Krippendorff's alpha"])
        expect(text).toContain(term);
      expect(text).toContain('Landis & Koch 1977');
      expect(
        await page.evaluate(() => document.documentElement.scrollWidth > document.documentElement.clientWidth),
      ).toBe(false);
    }
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import type { DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { startStack, type Stack } from '../support/stack.js';
import { PASSWORD, webDesk, type WebDesk } from '../support/web-desk.js';
import { userId } from '../support/verdict-rows.js';

const SIZES = [
  { name: 'phone', width: 390, height: 844 },
  { name: 'desktop', width: 1280, height: 800 },
] as const;

describe.each(DATABASE_KINDS)(
  'skipping, the reviewer’s protections and settings that cannot surprise, on %s',
  (kind) => {
    let s: Stack;
    let desk: WebDesk;
    let b: Browser;

    beforeAll(async () => {
      s = await startStack(kind);
      desk = await webDesk(s, { pool: 80 });
      // One verdict, so the desk's category order is fixed from here on.
      const l = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/leases`);
      const v = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/verdicts`, {
        leaseId: l.body.lease.id,
        itemId: l.body.item.id,
        category: 'ok',
        clientId: 'comfort-setup',
      });
      expect(v.status).toBe(201);
      b = await openBrowser(s.base);
    }, 180_000);
    afterAll(async () => {
      await (b as Browser | undefined)?.close();
      await (s as Stack | undefined)?.stop();
    });

    const itemId = async (page: Page) => Number(await page.locator('article.item').getAttribute('data-item-id'));
    const nextItem = (page: Page, prev: number) =>
      page.waitForFunction((p) => {
        const el = document.querySelector('article.item');
        return el !== null && el.getAttribute('data-item-id') !== String(p);
      }, prev);

    it('skips with s, blurs until r reveals, reminds of a break, and lists the keys, at both sizes', async () => {
      const { page } = b;
      await page.clock.install();
      await signIn(page, s.base, 'robin', PASSWORD);
      const robin = await userId(s.db, 'robin');
      for (const size of SIZES) {
        await page.setViewportSize({ width: size.width, height: size.height });
        await page.goto(`${s.base}/desks/${desk.deskId}/queue`);
        await page.locator('article.item').waitFor();

        // `?` lists the new keys beside the others.
        await page.keyboard.press('?');
        const help = page.getByRole('dialog', { name: 'Every key of the queue' });
        await help.waitFor();
        const keys = await help.locator('dt').allInnerTexts();
        for (const k of ['s', 'r', 'h', 'e', 'u', 'n', '?']) expect(keys).toContain(k);
        expect(new Set(keys).size).toBe(keys.length);
        await expect(help.innerText()).resolves.toMatch(/skip the item: it goes to another reviewer/);
        await page.keyboard.press('Escape');
        await help.waitFor({ state: 'detached' });

        // `s` skips: the item goes, and the server keeps it from this reviewer (not from others) for the session.
        const skipped = await itemId(page);
        await page.keyboard.press('s');
        await page
          .getByRole('status')
          .filter({ hasText: `Item ${skipped} is skipped` })
          .waitFor();
        await nextItem(page, skipped);
        const row = await s.db.queryOne<{ n: DbInt }>(
          null,
          'SELECT COUNT(*) AS n FROM lease_skips WHERE reviewer_id = $1 AND item_id = $2',
          [robin, skipped],
        );
        expect(Number(row?.n)).toBe(1);
        const open = await s.db.queryOne<{ state: string }>(null, 'SELECT state FROM items WHERE id = $1', [skipped]);
        expect(open?.state).toBe('open');

        // The blur: chosen on the screen, kept by the server for the account.
        await page.locator('details.wellbeing summary').click();
        await page.getByLabel('Blur each text until I reveal it').check();
        await page.locator('.item-shield.blurred').waitFor();
        // The screen blurs at once; the saving request may still be on its way.
        await expect.poll(async () => (await s.call(desk.rev, 'GET', '/api/me/preferences')).body.blurText).toBe(true);
        // `r` reveals, whatever has the focus (here the check box just clicked), and blurs again.
        await page.keyboard.press('r');
        await page.locator('.item-shield:not(.blurred)').waitFor();
        await page.keyboard.press('r');
        await page.locator('.item-shield.blurred').waitFor();
        await page.keyboard.press('r');
        // Each new item comes blurred again.
        const shown = await itemId(page);
        await page.keyboard.press('3');
        await nextItem(page, shown);
        await page.locator('.item-shield.blurred').waitFor();
        // Remembered: after a reload the text is still blurred.
        await page.reload();
        await page.locator('article.item .item-shield.blurred').waitFor();

        // The break reminder: five minutes here, typed and saved with Enter; the keys stay text while typing.
        await page.locator('details.wellbeing summary').click();
        const minutes = page.getByLabel('Remind me to take a break after this many minutes');
        await minutes.fill('');
        await minutes.focus();
        await page.keyboard.type('5');
        await page.keyboard.press('Enter');
        await expect
          .poll(async () => (await s.call(desk.rev, 'GET', '/api/me/preferences')).body.breakReminderMinutes)
          .toBe(5);
        expect(await page.getByRole('status').filter({ hasText: 'Time for a break' }).count()).toBe(0);
        await page.clock.fastForward('05:01');
        const reminder = page.getByRole('status').filter({ hasText: 'Time for a break' });
        await reminder.waitFor();
        await expect(reminder.innerText()).resolves.toMatch(/on the queue for 5 minutes/);
        await page.getByRole('button', { name: 'I am back from a break' }).click();
        await reminder.waitFor({ state: 'detached' });
        // A value out of range is refused in words and not saved.
        await minutes.fill('2');
        await minutes.press('Enter');
        await page.getByRole('alert').filter({ hasText: 'whole number of minutes from 5 to 480' }).waitFor();
        expect((await s.call(desk.rev, 'GET', '/api/me/preferences')).body.breakReminderMinutes).toBe(5);
        // Nothing reaches past the right edge at this size.
        const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
        expect(overflow).toBeLessThanOrEqual(0);

        // Back to no protections for the next size.
        await s.call(desk.rev, 'PUT', '/api/me/preferences', { blurText: false, breakReminderMinutes: null });
      }
      expect(b.foreign).toEqual([]);
    });

    it('settings in percentages, the second-opinion share editable, the order fixed once verdicts exist, at both sizes', async () => {
      const { page } = b;
      await page.goto(`${s.base}/signin`);
      await signIn(page, s.base, 'sasha', PASSWORD);
      let n = 0;
      for (const size of SIZES) {
        n++;
        await page.setViewportSize({ width: size.width, height: size.height });
        await page.goto(`${s.base}/desks/${desk.deskId}/settings`);
        const target = page.getByLabel('Coverage target (%, 50 to 99.9)');
        await target.waitFor();
        const before = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body;
        await expect(target.inputValue()).resolves.toBe(String(Math.round(before.coverageTarget * 1000) / 10));
        const second = page.getByLabel(/Share of decided items served again to another reviewer/);
        await expect(second.inputValue()).resolves.toBe(String(Math.round(before.secondOpinionShare * 1000) / 10));
        await target.fill(n === 1 ? '85' : '92.5');
        await second.fill(n === 1 ? '25' : '5');
        await page.getByLabel(/Serve second opinions of the demo's simulated verdicts/).setChecked(n === 1);
        await page.getByRole('button', { name: 'Save the settings' }).click();
        await page.getByRole('status').filter({ hasText: 'Saved at' }).waitFor();
        const saved = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body;
        expect(saved.coverageTarget).toBeCloseTo(n === 1 ? 0.85 : 0.925, 9);
        expect(saved.secondOpinionShare).toBeCloseTo(n === 1 ? 0.25 : 0.05, 9);
        expect(saved.serveSimulatedSecondOpinions).toBe(n === 1);

        // Reordering is refused by the screen before anything is sent, naming why.
        const cats = page.getByLabel(/Categories, one per line/);
        await expect(cats.inputValue()).resolves.toBe('threat\nharassment\nok');
        await cats.fill('harassment\nthreat\nok');
        await page.getByRole('button', { name: 'Save the settings' }).click();
        await page.getByRole('alert').filter({ hasText: 'the number keys of the queue follow it' }).waitFor();
        // Renaming a category in use is refused as the API does: its refusal is shown.
        await cats.fill('threat\nharassment\nfine');
        await page.getByRole('button', { name: 'Save the settings' }).click();
        await page
          .getByRole('alert')
          .filter({ hasText: /"ok" is used by \d+ verdict/ })
          .waitFor();
        const after = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body;
        expect(after.categories.map((c: { name: string }) => c.name)).toEqual(['threat', 'harassment', 'ok']);
        const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
        expect(overflow).toBeLessThanOrEqual(0);

        // The new-desk form: the target as a percentage and seed terms per category.
        await page.goto(`${s.base}/desks/new`);
        await page.getByLabel('Name', { exact: true }).fill(`Mossbank allotments ${size.name}`);
        await page.getByLabel(/Categories, one per line/).fill('threat\nok');
        await page.getByLabel('threat', { exact: true }).fill('hurt, find you');
        await page.getByLabel('Coverage target (%, 50 to 99.9)').fill('80');
        await page.getByRole('button', { name: 'Create the desk' }).click();
        await page.waitForURL(/\/desks\/\d+\/import$/);
        const made = Number(new URL(page.url()).pathname.split('/')[2]);
        const created = (await s.call(desk.sup, 'GET', `/api/desks/${made}`)).body;
        expect(created.coverageTarget).toBeCloseTo(0.8, 9);
        expect(created.seedTerms).toEqual({ threat: ['hurt', 'find you'] });
        expect(created.secondOpinionShare).toBeCloseTo(0.1, 9);
        expect(created.serveSimulatedSecondOpinions).toBe(false);
      }
      expect(b.foreign).toEqual([]);
    });
  },
);

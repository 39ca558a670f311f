import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { deskTabs, SCREENS, type Role } from '../../apps/web/src/routes.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { startStack, type Stack } from '../support/stack.js';
import { PASSWORD, webDesk, type WebDesk } from '../support/web-desk.js';

/** A phone held upright and a laptop: the two sizes every screen is checked at. */
const SIZES = [
  { name: 'phone', width: 390, height: 844 },
  { name: 'laptop', width: 1280, height: 800 },
] as const;

/** Below this width the desk's sections sit behind the menu button (styles.css). */
const MENU_BELOW = 760;

const ACCOUNTS: Record<Role, string> = { reviewer: 'robin', supervisor: 'sasha', auditor: 'ada', admin: 'root' };

/** Elements that reach past the right edge of the window, outside any box that scrolls on its own. */
async function overflowing(page: Page): Promise<{ scrollWidth: number; clientWidth: number; culprits: string[] }> {
  return page.evaluate(() => {
    const root = document.documentElement;
    const culprits: string[] = [];
    for (const el of Array.from(document.querySelectorAll('body *'))) {
      if (el.closest('.table-box') && !el.classList.contains('table-box')) continue;
      const r = el.getBoundingClientRect();
      if (r.width > 0 && r.right > root.clientWidth + 0.5)
        culprits.push(`${el.tagName.toLowerCase()}.${el.className} (right edge ${Math.round(r.right)})`);
    }
    return { scrollWidth: root.scrollWidth, clientWidth: root.clientWidth, culprits: culprits.slice(0, 8) };
  });
}

/** Waits for a screen's first answer: its heading, or the queue's item. */
async function ready(page: Page): Promise<void> {
  await page.locator('main h1, main article.item').first().waitFor();
  await page.waitForLoadState('networkidle', { timeout: 3000 }).catch(() => undefined);
}

/** True when the element is shown and lies inside the window from left to right. */
async function reachable(page: Page, name: string, role: 'link' | 'button'): Promise<boolean> {
  const el = page.getByRole(role, { name, exact: true }).first();
  if (!(await el.isVisible())) return false;
  const box = await el.boundingBox();
  const width = page.viewportSize()!.width;
  return box !== null && box.x >= 0 && box.x + box.width <= width && box.height > 0;
}

// Widths depend on the screens and the data they show, not on the database behind the API: one database suffices
// here (every other browser test runs on both). Checking each screen of each role at two sizes is the suite's
// longest browser run, so it is not repeated.
describe.each(['sqlite'] as const)('every screen at phone and laptop size on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  let version: number;
  let itemId: number;
  let b: Browser;

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 200, verdicts: 60 });
    await s.user(ACCOUNTS.admin, 'admin', PASSWORD);
    version = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
    itemId = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/verdicts?limit=1`)).body.verdicts[0]
      .itemId as number;
    b = await openBrowser(s.base);
  }, 180_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  const path = (pattern: string): string =>
    pattern.replace(/:(\w+)/g, (_, p: string) => {
      if (p === 'deskId') return String(desk.deskId);
      if (p === 'version') return String(version);
      if (p === 'itemId') return String(itemId);
      throw new Error(`the layout test has no value for :${p} in ${pattern}: add one`);
    });

  for (const role of ['reviewer', 'supervisor', 'auditor', 'admin'] as const) {
    it(`${role}: no screen scrolls sideways and the navigation is in reach`, async () => {
      const { page } = b;
      await page.setViewportSize({ width: 1280, height: 800 });
      await signIn(page, s.base, ACCOUNTS[role], PASSWORD);
      const screens = SCREENS.filter((r) => (r.roles as readonly Role[]).includes(role));
      expect(screens.length).toBeGreaterThan(0);
      for (const screen of screens) {
        const url = path(screen.pattern);
        const onDesk = screen.pattern.startsWith('/desks/:deskId');
        const tabs = onDesk ? deskTabs(role, desk.deskId).map((t) => t.label) : [];
        for (const size of SIZES) {
          const where = `${url} at ${size.width}×${size.height}`;
          await page.setViewportSize({ width: size.width, height: size.height });
          await page.goto(`${s.base}${url}`);
          await ready(page);
          const o = await overflowing(page);
          expect(o.culprits, `${where}: reaches past the right edge`).toEqual([]);
          expect(o.scrollWidth, `${where}: the page scrolls sideways`).toBeLessThanOrEqual(o.clientWidth);

          const menu = page.getByRole('button', { name: 'Menu', exact: true });
          if (size.width < MENU_BELOW) {
            await expect(menu.isVisible(), `${where}: a menu button`).resolves.toBe(true);
            await expect(menu.getAttribute('aria-expanded')).resolves.toBe('false');
            await expect(reachable(page, 'Sign out', 'button')).resolves.toBe(false);
            await menu.click();
            await expect(menu.getAttribute('aria-expanded')).resolves.toBe('true');
          } else {
            await expect(menu.isVisible(), `${where}: no menu button`).resolves.toBe(false);
          }
          for (const tab of tabs)
            await expect(reachable(page, tab, 'link'), `${where}: the “${tab}” section`).resolves.toBe(true);
          await expect(reachable(page, 'Sign out', 'button'), `${where}: Sign out`).resolves.toBe(true);
          await expect(reachable(page, 'Cribra', 'link'), `${where}: the desk list`).resolves.toBe(true);
          // The open menu does not widen the page either.
          expect((await overflowing(page)).culprits, `${where} with the menu open`).toEqual([]);
        }
      }
      // On a phone, a section chosen from the menu opens and the menu closes behind it.
      const tabs = deskTabs(role, desk.deskId);
      await page.setViewportSize({ width: 390, height: 844 });
      if (tabs.length > 0) {
        const target = tabs.at(-1)!;
        await page.goto(`${s.base}${tabs[0].href}`);
        await ready(page);
        await page.getByRole('button', { name: 'Menu', exact: true }).click();
        await page.getByRole('link', { name: target.label, exact: true }).click();
        await page.waitForURL(`${s.base}${target.href}`);
        await expect(
          page.getByRole('button', { name: 'Menu', exact: true }).getAttribute('aria-expanded'),
        ).resolves.toBe('false');
      }
      await page.getByRole('button', { name: 'Menu', exact: true }).click();
      await page.getByRole('button', { name: 'Sign out' }).click();
      await page.waitForURL(/\/signin/);
      expect(b.foreign).toEqual([]);
    }, 240_000);
  }
});

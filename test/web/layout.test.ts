import { describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { deskTabs, SCREENS, type Role } from '../../apps/web/src/routes.js';
import { signIn } from '../support/browser.js';
import { PASSWORD } from '../support/web-desk.js';
import { ACCOUNTS, everyScreenDesk, ready } from '../support/every-screen.js';

/** A phone held upright and a laptop: the two sizes every screen is checked at. */
const SIZES = [
  { name: 'phone', width: 390, height: 844 },
  { name: 'laptop', width: 1280, height: 800 },
] as const;

/** Below this width the desk's sections sit behind the menu button (styles.css). */
const MENU_BELOW = 760;

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
  const every = everyScreenDesk(kind, 'layout');

  for (const role of ['reviewer', 'supervisor', 'auditor', 'admin'] as const) {
    it(`${role}: no screen scrolls sideways and the navigation is in reach`, async () => {
      const { stack: s, browser: b, desk, path } = every;
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

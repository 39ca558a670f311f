import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { SCREENS, type Role } from '../../apps/web/src/routes.js';
import { signIn } from '../support/browser.js';
import { PASSWORD } from '../support/web-desk.js';
import { ACCOUNTS, everyScreenDesk, ready } from '../support/every-screen.js';

/** axe-core from node_modules (a development dependency), run inside the page: nothing is fetched. */
const AXE_SOURCE = readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8');

/** The role each screen is checked as: the first of these that may open it, so every screen is visited once. */
const ORDER: Role[] = ['supervisor', 'auditor', 'reviewer', 'admin'];

interface Finding {
  id: string;
  impact: string | null;
  help: string;
  targets: string[];
}

/**
 * Runs axe's WCAG 2.x A and AA rules on the page and returns the serious and critical violations. The script is
 * evaluated through the debugging protocol, which the page's Content-Security-Policy does not govern; the page
 * itself still cannot load anything.
 */
async function axeFindings(page: Page): Promise<Finding[]> {
  await page.evaluate(AXE_SOURCE);
  return page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run: (ctx: Document, o: object) => Promise<any> } }).axe;
    const result = await axe.run(document, {
      runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa'] },
      resultTypes: ['violations'],
    });
    return (result.violations as any[])
      .filter((v) => v.impact === 'serious' || v.impact === 'critical')
      .map((v) => ({
        id: v.id as string,
        impact: v.impact as string,
        help: v.help as string,
        targets: (v.nodes as any[]).slice(0, 5).map((n) => `${String(n.target)}: ${n.failureSummary ?? ''}`),
      }));
  });
}

/**
 * The chart strokes and fills that carry meaning (axes, series, bars, intervals, the target marker) whose contrast with
 * the chart's background is below 3:1, the WCAG 2.1 rule for graphical objects (1.4.11), which axe does not check.
 * Contrast is WCAG's: (L1 + 0.05) / (L2 + 0.05) of the relative luminances. The grid and the interval bands are
 * decoration and are left out.
 */
async function chartContrastFindings(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const rgb = (c: string): number[] | null => {
      const m = /rgba?\(([^)]+)\)/.exec(c);
      if (!m) return null;
      const parts = m[1]
        .split(/[\s,/]+/)
        .filter(Boolean)
        .map(Number);
      return parts.length === 4 && parts[3] === 0 ? null : parts.slice(0, 3);
    };
    const luminance = (c: number[]): number => {
      const [r, g, b] = c.map((v) => {
        const x = v / 255;
        return x <= 0.03928 ? x / 12.92 : ((x + 0.055) / 1.055) ** 2.4;
      });
      return 0.2126 * r + 0.7152 * g + 0.0722 * b;
    };
    const background = (el: Element): number[] => {
      for (let e: Element | null = el; e; e = e.parentElement) {
        const c = rgb(getComputedStyle(e).backgroundColor);
        if (c) return c;
      }
      return [255, 255, 255];
    };
    const found: string[] = [];
    const selector =
      '.chart .axis line, .chart .series polyline, .chart .series circle, .chart .bar rect, .chart .interval line, ' +
      '.chart .interval circle, .chart .marker';
    for (const el of Array.from(document.querySelectorAll(selector))) {
      if (el.getClientRects().length === 0) continue;
      const style = getComputedStyle(el);
      // Lines are their stroke; a point or bar is its fill, or its ring when it has one (the hollow points).
      const ringed = el.tagName === 'circle' && style.stroke !== 'none';
      const paint = rgb(el.tagName === 'polyline' || el.tagName === 'line' || ringed ? style.stroke : style.fill);
      if (!paint) continue;
      const a = luminance(paint);
      const b = luminance(background(el));
      const ratio = (Math.max(a, b) + 0.05) / (Math.min(a, b) + 0.05);
      if (ratio < 3) {
        const where = el.closest('g')?.getAttribute('class') ?? el.getAttribute('class') ?? el.tagName;
        found.push(`${el.tagName} in ${where}: ${ratio.toFixed(2)}:1`);
      }
    }
    return [...new Set(found)];
  });
}

// Colours and structure do not depend on the database: SQLite only, each screen once per colour scheme.
describe.each(['sqlite'] as const)('axe on every screen, light and dark, wide and narrow, on %s', (kind) => {
  const every = everyScreenDesk(kind, 'accessibility');

  for (const scheme of ['light', 'dark'] as const) {
    it(`${scheme}: no serious or critical finding on any screen at 1280×800 or 390×844`, async () => {
      const { stack: s, browser: b, path } = every;
      const { page } = b;
      await page.setViewportSize({ width: 1280, height: 800 });
      await page.emulateMedia({ colorScheme: scheme });
      const findings: string[] = [];
      const record = (where: string, list: Finding[]) => {
        for (const f of list)
          findings.push(`${where}: ${f.id} (${f.impact}) ${f.help}\n    ${f.targets.join('\n    ')}`);
      };
      await page.context().clearCookies();
      await page.goto(`${s.base}/signin`);
      await page.getByLabel('Name').waitFor();
      // The scheme really applies: the page's background follows it.
      const background = await page.evaluate(() => getComputedStyle(document.documentElement).backgroundColor);
      expect(background).toBe(scheme === 'dark' ? 'rgb(20, 24, 27)' : 'rgb(247, 245, 240)');
      record('/signin', await axeFindings(page));
      let visited = 0;
      let charts = 0;
      let prevalence = 0;
      for (const role of ORDER) {
        const screens = SCREENS.filter((r) => ORDER.find((o) => (r.roles as readonly Role[]).includes(o)) === role);
        if (screens.length === 0) continue;
        await page.context().clearCookies();
        await signIn(page, s.base, ACCOUNTS[role], PASSWORD);
        for (const screen of screens) {
          const url = path(screen.pattern);
          await page.goto(`${s.base}${url}`);
          await ready(page);
          record(`${url} as ${role} at 1280×800`, await axeFindings(page));
          for (const f of await chartContrastFindings(page)) findings.push(`${url} as ${role}: chart contrast, ${f}`);
          charts += await page.locator('.chart').count();
          const weeks = page.locator('.prevalence select');
          if ((await weeks.count()) > 0) {
            // The desk's posts carry no posting time: weeks of import draw the prevalence lines and their bands.
            await weeks.selectOption('imported');
            await page.locator('.prevalence .chart .prev-0 circle').first().waitFor();
            for (const f of await chartContrastFindings(page)) findings.push(`${url} as ${role}: prevalence, ${f}`);
            prevalence++;
          }
          // The same screen on a phone: the menu replaces the tabs and tables scroll in their own box.
          await page.setViewportSize({ width: 390, height: 844 });
          await page.waitForFunction(() => document.documentElement.clientWidth === 390);
          record(`${url} as ${role} at 390×844`, await axeFindings(page));
          await page.setViewportSize({ width: 1280, height: 800 });
          visited++;
        }
      }
      expect(visited).toBe(SCREENS.length);
      // The desk has versions and verdicts, so the overview, coverage and version screens draw their charts.
      expect(charts).toBeGreaterThanOrEqual(5);
      expect(prevalence).toBe(1);
      expect(findings).toEqual([]);
      expect(b.foreign).toEqual([]);
    }, 240_000);
  }
});

import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

/** Debian's Chromium, driven by playwright-core: no browser is downloaded. */
export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
const FLAGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--no-first-run',
];

export interface Browser {
  context: BrowserContext;
  page: Page;
  /** Every URL any page requested that is not on the server's own origin (data: and blob: URLs excepted). */
  foreign: string[];
  close(): Promise<void>;
}

/** A fresh browser profile per call, 1280×800, recording every request its pages make. */
export async function openBrowser(origin: string): Promise<Browser> {
  const profile = mkdtempSync(join(tmpdir(), 'cribra-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: FLAGS,
    viewport: { width: 1280, height: 800 },
  });
  const foreign: string[] = [];
  context.on('request', (r) => {
    const url = r.url();
    if (!url.startsWith(`${origin}/`) && url !== origin && !url.startsWith('data:') && !url.startsWith('blob:'))
      foreign.push(url);
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  return {
    context,
    page,
    foreign,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
      if (errors.length) throw new Error(`the page threw: ${errors.join('; ')}`);
    },
  };
}

/** Signs in through the form with the keyboard only. */
export async function signIn(page: Page, origin: string, name: string, password: string): Promise<void> {
  await page.goto(`${origin}/signin`);
  await page.getByLabel('Name').focus();
  await page.keyboard.type(name);
  await page.keyboard.press('Tab');
  await page.keyboard.type(password);
  await page.keyboard.press('Enter');
  await page.waitForURL((u) => !u.pathname.startsWith('/signin'));
}

/** Where the browser tests keep the screenshots the README shows. */
export const SCREENSHOTS = join(process.cwd(), 'docs', 'screenshots');

export async function screenshot(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: join(SCREENSHOTS, `${name}.png`), fullPage: false });
}

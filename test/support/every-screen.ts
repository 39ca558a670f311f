import { afterAll, beforeAll } from 'vitest';
import type { Page } from 'playwright-core';
import type { Role } from '../../apps/web/src/routes.js';
import { openBrowser, type Browser } from './browser.js';
import { startStack, type Stack } from './stack.js';
import { PASSWORD, webDesk, type WebDesk } from './web-desk.js';

/** The account of each role on the desk of {@link everyScreenDesk} (the web desk's, and an admin). */
export const ACCOUNTS: Record<Role, string> = { reviewer: 'robin', supervisor: 'sasha', auditor: 'ada', admin: 'root' };

/** Waits for a screen's first answer: its heading, or the queue's item. */
export async function ready(page: Page): Promise<void> {
  await page.locator('main h1, main article.item').first().waitFor();
  await page.waitForLoadState('networkidle', { timeout: 3000 }).catch(() => undefined);
}

/** What a test of every screen works with, filled in once its `beforeAll` has run. */
export interface EveryScreen {
  stack: Stack;
  desk: WebDesk;
  browser: Browser;
  /** A route pattern of `routes.ts` with its parameters filled in (this desk, its current version, a decided item). */
  path: (pattern: string) => string;
}

/**
 * For a `describe` that visits every screen of every role: a stack on `kind`, the web desk with a published version
 * and verdicts (200 posts, 60 verdicts), an admin account, and one browser, started before its tests and stopped
 * after them. `test` names the test in the error a route with an unknown parameter gets.
 */
export function everyScreenDesk(kind: 'sqlite' | 'postgres', test: string): EveryScreen {
  const state = {} as EveryScreen & { version: number; itemId: number };
  beforeAll(async () => {
    state.stack = await startStack(kind);
    const s = state.stack;
    state.desk = await webDesk(s, { pool: 200, verdicts: 60 });
    await s.user(ACCOUNTS.admin, 'admin', PASSWORD);
    const desk = state.desk;
    state.version = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
    state.itemId = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/verdicts?limit=1`)).body.verdicts[0]
      .itemId as number;
    state.browser = await openBrowser(s.base);
  }, 180_000);
  afterAll(async () => {
    await (state.browser as Browser | undefined)?.close();
    await (state.stack as Stack | undefined)?.stop();
  });
  state.path = (pattern: string): string =>
    pattern.replace(/:(\w+)/g, (_, p: string) => {
      if (p === 'deskId') return String(state.desk.deskId);
      if (p === 'version') return String(state.version);
      if (p === 'itemId') return String(state.itemId);
      throw new Error(`the ${test} test has no value for :${p} in ${pattern}: add one`);
    });
  return state;
}

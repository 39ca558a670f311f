import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { startStack, type Stack } from '../support/stack.js';
import { PASSWORD, webDesk, type WebDesk } from '../support/web-desk.js';

// The screen only calls the API, whose behaviour on both databases test/api/term-suggestions.test.ts checks;
// one database is enough here.
describe('seed-term suggestions on the settings screen', () => {
  let s: Stack;
  let b: Browser;
  let desk: WebDesk;

  beforeAll(async () => {
    s = await startStack('sqlite', { env: { TERMS_AFTER_SECONDS: '0' } });
    desk = await webDesk(s, { pool: 300 });
    await s.waitForQueuesIdle(120_000);
    b = await openBrowser(s.base);
  }, 240_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  const suggested = async () =>
    (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/term-suggestions?category=threat&limit=15`)).body
      .similar as Array<{ term: string }>;

  it('adds a suggestion to the seed terms and dismisses another, both remembered', async () => {
    const { page } = b;
    await signIn(page, s.base, 'sasha', PASSWORD);
    await page.goto(`${s.base}/desks/${desk.deskId}/settings`);
    const panel = page.locator('section.term-suggestions-panel');
    await panel.getByRole('heading', { name: 'Seed-term suggestions' }).waitFor();
    await panel.getByLabel('Category').selectOption('threat');
    const rows = panel.locator('table.term-suggestions').first().locator('tbody tr');
    await rows.first().waitFor();
    const terms = await rows.evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-term') ?? ''));
    expect(terms.length).toBeGreaterThan(1);
    expect(terms).toEqual((await suggested()).map((x) => x.term));
    // Each row shows a passage with the term marked.
    await expect(rows.first().locator('mark').first().innerText()).resolves.toMatch(new RegExp(terms[0], 'i'));

    const [added, dismissed] = [terms[0], terms[1]];
    await panel.getByRole('button', { name: `Add “${added}” to the seed terms of threat` }).click();
    await expect(panel.getByRole('status').innerText()).resolves.toContain(`“${added}” is now a seed term of threat`);
    await panel.locator(`tr[data-term="${dismissed}"]`).waitFor();
    await panel.getByRole('button', { name: `Do not suggest “${dismissed}” for threat again` }).click();
    await expect(panel.getByRole('status').innerText()).resolves.toContain(`“${dismissed}” will not be suggested`);
    await panel.locator(`tr[data-term="${dismissed}"]`).waitFor({ state: 'detached' });

    // The server holds both decisions; the desk form shows the new seed term.
    const d = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body;
    expect(d.seedTerms.threat).toContain(added);
    const after = (await suggested()).map((x) => x.term);
    expect(after).not.toContain(added);
    expect(after).not.toContain(dismissed);
    await expect(page.getByLabel('threat', { exact: true }).inputValue()).resolves.toContain(added);
    expect(b.foreign).toEqual([]);
  });
});

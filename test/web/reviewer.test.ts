import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { startStack, type Stack } from '../support/stack.js';
import { PASSWORD, webDesk, type WebDesk } from '../support/web-desk.js';

/** Time from a verdict key press to the next item rendered, measured here and printed. Target: ≤ 300 ms on this machine. */
const NEXT_ITEM_TARGET_MS = 300;

describe.each(DATABASE_KINDS)('the reviewer screen on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  let b: Browser;

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 300, verdicts: 60 });
    b = await openBrowser(s.base);
  }, 180_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('decides five items with the keyboard only, undoes one, and sees the next item at once', async () => {
    const { page } = b;
    await signIn(page, s.base, 'robin', PASSWORD);
    // From the desk list to the queue with the keyboard: the desk's link is the first one after the brand.
    await page.getByRole('link', { name: 'Mossbank Commons' }).focus();
    await page.keyboard.press('Enter');
    await page.waitForURL(`${s.base}/desks/${desk.deskId}/queue`);
    const item = page.locator('article.item');
    await item.waitFor();
    // The prediction set is the main signal, in words; the probabilities are on the same screen.
    await expect(page.locator('.call .call-word').textContent()).resolves.toMatch(
      /^. (Sure|Ambiguous|Unfamiliar|One category left)/,
    );
    await expect(page.locator('table.probabilities tbody tr').count()).resolves.toBe(3);
    // The bars come with their reading: what the probabilities are and are not.
    await expect(page.locator('table.probabilities tfoot').innerText()).resolves.toMatch(
      /^Probabilities: the model’s leaning, .* is not how often the model is right/,
    );
    // The bars follow the keys' order; each category outside the set says why it is ruled out.
    const rowNames = (await page.locator('table.probabilities th').allInnerTexts()).map((t) => t.split(' ')[0]);
    expect(rowNames).toEqual(['threat', 'harassment', 'ok']);
    const inSet = await page.locator('table.probabilities tr.in-set').count();
    const ruledOut = await page.locator('.ruled-out li').allInnerTexts();
    expect(ruledOut).toHaveLength(3 - inSet);
    for (const line of ruledOut)
      expect(line).toMatch(/^(\w+) is ruled out: fewer than 10 % of \1 posts look this little like \1\.$/);
    // The reviewer is never told why an item was served.
    const text = (await page.locator('main').innerText()).toLowerCase();
    for (const word of ['random', 'uncertainty', 'draw', 'second opinion', 'second-opinion'])
      expect(text).not.toContain(word);
    await expect(page.locator('footer').innerText()).resolves.toContain('emergency services');

    const decided: Array<{ itemId: number; category: string }> = [];
    const timings: number[] = [];
    for (let i = 0; i < 5; i++) {
      const itemId = Number(await item.getAttribute('data-item-id'));
      const externalRef = (await page.locator('.item-meta').innerText()).match(/ref (\S+)/)?.[1];
      const category = desk.labels.get(externalRef!)!;
      const key = String(['threat', 'harassment', 'ok'].indexOf(category) + 1);
      const t0 = Date.now();
      await page.keyboard.press(key);
      await page.waitForFunction(
        (prev) => {
          const el = document.querySelector('article.item');
          return (el && el.getAttribute('data-item-id') !== String(prev)) || document.querySelector('.empty-queue');
        },
        itemId,
        { polling: 'raf' },
      );
      timings.push(Date.now() - t0);
      decided.push({ itemId, category });
    }
    timings.sort((a, b) => a - b);
    const median = timings[2];
    process.stdout.write(
      `${JSON.stringify({ measure: 'verdict key to next item rendered', kind, ms: timings, median, target: NEXT_ITEM_TARGET_MS })}\n`,
    );
    expect(median).toBeLessThanOrEqual(NEXT_ITEM_TARGET_MS);

    // `u` undoes the last verdict and puts that same item back in front of the reviewer to correct it.
    await page.keyboard.press('u');
    await page.getByRole('status').filter({ hasText: 'back for you to decide again' }).waitFor();
    await page.waitForFunction(
      (id) => document.querySelector('article.item')?.getAttribute('data-item-id') === String(id),
      decided[4].itemId,
    );

    const mine = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=10`)).body
      .verdicts as Array<{ itemId: number; category: string; undoneAt: string | null; elapsedMs: number }>;
    const fromScreen = mine.filter((v) => decided.some((d) => d.itemId === v.itemId));
    expect(fromScreen).toHaveLength(5);
    for (const v of fromScreen) expect(v.category).toBe(decided.find((d) => d.itemId === v.itemId)!.category);
    const undone = fromScreen.filter((v) => v.undoneAt !== null);
    expect(undone.map((v) => v.itemId)).toEqual([decided[4].itemId]);
    expect(fromScreen.every((v) => v.elapsedMs >= 0)).toBe(true);

    // The correction is a new verdict on the same item by the same reviewer; today's count follows.
    // (The desk's setup verdicts were given today by the same reviewer through the API: they count too.)
    const midnight = new Date();
    midnight.setHours(0, 0, 0, 0);
    const live = (
      await s.call(
        desk.rev,
        'GET',
        `/api/desks/${desk.deskId}/verdicts/mine/count?since=${encodeURIComponent(midnight.toISOString())}`,
      )
    ).body.count as number;
    const todayShown = async () => Number(await page.locator('.today strong').innerText());
    await expect(todayShown()).resolves.toBe(live);
    const again = decided[4].category === 'ok' ? 'threat' : 'ok';
    await page.keyboard.press(String(['threat', 'harassment', 'ok'].indexOf(again) + 1));
    await page.waitForFunction(
      (id) => document.querySelector('article.item')?.getAttribute('data-item-id') !== String(id),
      decided[4].itemId,
    );
    await expect(todayShown()).resolves.toBe(live + 1);
    const [corrected] = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=1`)).body
      .verdicts;
    expect(corrected).toMatchObject({ itemId: decided[4].itemId, category: again, undoneAt: null });
    expect(b.foreign).toEqual([]);
  });

  it('keeps the keys working whatever has focus, except while typing the note; h hands back, ? lists every key', async () => {
    const { page } = b;
    const item = page.locator('article.item');
    const current = async () => Number(await item.getAttribute('data-item-id'));
    const changed = (prev: number) =>
      page.waitForFunction(
        (p) => document.querySelector('article.item')?.getAttribute('data-item-id') !== String(p),
        prev,
      );
    // After a click on the check box, a number key still decides.
    const box = page.getByLabel('Confirm each verdict with Enter');
    await box.click();
    await box.click();
    await expect(page.evaluate(() => document.activeElement?.getAttribute('type'))).resolves.toBe('checkbox');
    let id = await current();
    await page.keyboard.press('3');
    await changed(id);
    // In the note a digit is text; Esc leaves the note and the next digit decides.
    id = await current();
    await page.getByLabel(/^Note/).click();
    await page.keyboard.type('3 posts alike');
    expect(await current()).toBe(id);
    await page.keyboard.press('Escape');
    await page.keyboard.press('3');
    await changed(id);
    const [withNote] = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=1`)).body.verdicts;
    expect(withNote).toMatchObject({ itemId: id, category: 'ok', note: '3 posts alike' });
    // h: the item goes back to the queue and another one is shown; nothing is decided.
    id = await current();
    const before = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=1000`)).body.verdicts
      .length;
    await page.keyboard.press('h');
    await changed(id);
    await page
      .getByRole('status')
      .filter({ hasText: `Item ${id} is handed back` })
      .waitFor();
    expect(
      (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=1000`)).body.verdicts.length,
    ).toBe(before);
    const [returned] = await s.db.query<{ closed_reason: string }>(
      null,
      'SELECT closed_reason FROM leases WHERE item_id = $1 ORDER BY created_at DESC LIMIT 1',
      [id],
    );
    expect(returned.closed_reason).toBe('returned');
    // ? lists every key; while it is open a number key decides nothing; Esc closes it.
    id = await current();
    await page.keyboard.press('?');
    const dialog = page.getByRole('dialog', { name: 'Every key of the queue' });
    await dialog.waitFor();
    for (const k of ['1', '0', 'u', 'n', 'h', 'Esc', '?'])
      await dialog.locator('kbd', { hasText: k }).first().waitFor();
    await page.keyboard.press('2');
    expect(await current()).toBe(id);
    await page.keyboard.press('Escape');
    await dialog.waitFor({ state: 'detached' });
    expect(b.foreign).toEqual([]);
  });

  it('confirms with Enter when two-step confirmation is on, and keeps a note with the verdict', async () => {
    const { page } = b;
    const item = page.locator('article.item');
    await page.getByLabel('Confirm each verdict with Enter').check();
    await page.locator('body').click({ position: { x: 5, y: 300 } });
    const itemId = await item.getAttribute('data-item-id');
    await page.keyboard.press('n');
    await page.keyboard.type('mentions a neighbour by name');
    await page.keyboard.press('Escape');
    await page.keyboard.press('3');
    await page.getByText('Press Enter to confirm').waitFor();
    expect(await item.getAttribute('data-item-id')).toBe(itemId);
    await page.keyboard.press('Enter');
    await page.waitForFunction(
      (prev) => document.querySelector('article.item')?.getAttribute('data-item-id') !== prev,
      itemId,
    );
    const [v] = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=1`)).body.verdicts;
    expect(v).toMatchObject({ itemId: Number(itemId), category: 'ok', note: 'mentions a neighbour by name' });
  });

  it('sends one verdict for a key pressed twice in a row', async () => {
    const { page } = b;
    await page.getByLabel('Confirm each verdict with Enter').uncheck();
    await page.locator('body').click({ position: { x: 5, y: 300 } });
    const before = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=1000`)).body.verdicts
      .length;
    const itemId = await page.locator('article.item').getAttribute('data-item-id');
    await page.keyboard.press('3');
    await page.keyboard.press('3');
    await page.waitForFunction(
      (prev) => document.querySelector('article.item')?.getAttribute('data-item-id') !== prev,
      itemId,
    );
    await new Promise((r) => setTimeout(r, 300));
    const mine = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/verdicts/mine?limit=1000`)).body.verdicts;
    // One live verdict for the item shown (an item undone earlier can come back), two at most in all when the second
    // press reached the next item: never two for one item.
    const onItem = mine.filter(
      (v: { itemId: number; undoneAt: string | null }) => v.itemId === Number(itemId) && v.undoneAt === null,
    );
    expect(onItem).toHaveLength(1);
    expect(mine.length - before).toBeGreaterThanOrEqual(1);
    expect(mine.length - before).toBeLessThanOrEqual(2);
  });

  it('refuses supervisor and auditor screens in plain words', async () => {
    const { page } = b;
    for (const path of [`/desks/${desk.deskId}/coverage`, `/desks/${desk.deskId}/trail`, '/desks/new']) {
      await page.goto(`${s.base}${path}`);
      const refusal = page.getByRole('alert').filter({ hasText: 'Not open to your role' });
      await refusal.waitFor();
      await expect(refusal.innerText()).resolves.toContain('You are signed in as robin, a reviewer');
    }
    // The API refuses the same data.
    expect((await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/coverage`)).status).toBe(403);
    await page.goto(`${s.base}/desks/${desk.deskId}/queue`);
    await page.locator('article.item').waitFor();
    expect(b.foreign).toEqual([]);
  });

  it('tells plainly when a hold has run out', async () => {
    const { page } = b;
    await page.locator('article.item').waitFor();
    const [lease] = (await s.call(desk.rev, 'GET', `/api/desks/${desk.deskId}/leases/mine`)).body.leases;
    const left = new Date(lease.expiresAt).getTime() - Date.now();
    // The screen counts down to the expiry the server gave; move the page's clock past it.
    await page.evaluate((ms) => {
      const real = Date.now.bind(Date);
      Date.now = () => real() + ms;
    }, left + 1000);
    const warning = page.getByRole('alert').filter({ hasText: 'Your hold on this item ended' });
    await warning.waitFor({ timeout: 5000 });
    await expect(page.locator('.timers').innerText()).resolves.toContain('ended');
    await expect(warning.innerText()).resolves.toContain('Another reviewer may have it now');
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { PASSWORD, webDesk, type WebDesk } from '../support/web-desk.js';

describe.each(DATABASE_KINDS)('escalating an item from the queue on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  let b: Browser;

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 30 });
    b = await openBrowser(s.base);
  }, 120_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('marks an item urgent with the keyboard; the supervisor sees it at the top of the overview and acknowledges it', async () => {
    const page = b.page;
    await signIn(page, s.base, 'robin', PASSWORD);
    await page.goto(`${s.base}/desks/${desk.deskId}/queue`);
    const item = page.locator('article.item');
    await item.waitFor();
    const itemId = Number(await item.getAttribute('data-item-id'));
    await expect(page.getByLabel('Keys').innerText()).resolves.toContain('e urgent');

    // `e` opens the reason field with the focus in it; a verdict key without a reason is refused on the screen.
    await page.keyboard.press('e');
    const reason = page.getByLabel('Why it is urgent');
    await expect(reason.evaluate((el) => el === document.activeElement)).resolves.toBe(true);
    await page.keyboard.press('Escape');
    await page.keyboard.press('1');
    await expect(page.getByRole('alert').innerText()).resolves.toContain('needs a short reason');
    await expect(reason.evaluate((el) => el === document.activeElement)).resolves.toBe(true);
    await page.keyboard.type('names a street and a time');
    // Enter leaves the field (it does not send); the verdict key then sends the verdict as urgent.
    await page.keyboard.press('Enter');
    await expect(item.getAttribute('data-item-id')).resolves.toBe(String(itemId));
    await page.keyboard.press('1');
    await page
      .getByRole('status')
      .filter({ hasText: `Item ${itemId} is marked urgent` })
      .waitFor();
    await expect(page.getByLabel('Why it is urgent').count()).resolves.toBe(0);

    const stored = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/urgent`)).body;
    expect(stored.waiting).toBe(1);
    expect(stored.items[0]).toMatchObject({ itemId, reason: 'names a street and a time', category: 'threat' });

    // The supervisor, in the same browser.
    const sp = b.page;
    await signIn(sp, s.base, 'sasha', PASSWORD);
    await sp.goto(`${s.base}/desks/${desk.deskId}`);
    const region = sp.getByRole('region', { name: /Urgent: 1 item waits/ });
    await region.waitFor();
    await expect(region.innerText()).resolves.toContain('names a street and a time');
    // At the top: above the desk's figures.
    const urgentTop = (await region.boundingBox())!.y;
    await sp.locator('dl.figures').waitFor();
    expect(urgentTop).toBeLessThan((await sp.locator('dl.figures').boundingBox())!.y);
    await region.getByRole('button', { name: `Acknowledge item ${itemId}` }).click();
    await region.waitFor({ state: 'detached' });
    await eventually(
      async () =>
        (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/urgent`)).body.waiting === 0 ? true : undefined,
      10_000,
      'the acknowledgement',
    );
  });
});

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { startStack, type Stack } from '../support/stack.js';
import { deskWithItems, insertVerdicts, userId } from '../support/verdict-rows.js';
import { PASSWORD } from '../support/web-desk.js';

// The panel only calls the API, whose behaviour on both databases test/retention/retention.test.ts checks;
// one database is enough here.
describe('the retention panel on the settings screen', () => {
  let s: Stack;
  let b: Browser;
  let sup = '';
  let deskId = 0;

  beforeAll(async () => {
    s = await startStack('sqlite');
    sup = await s.user('sasha', 'supervisor', PASSWORD);
    await s.user('robin', 'reviewer', PASSWORD);
    const d = await deskWithItems(s, sup, ['threat', 'harassment', 'ok'], 6, 'Mossbank Commons');
    deskId = d.deskId;
    // Two items decided ok 40 days ago, one decided threat, three never decided.
    const rev = await userId(s.db, 'robin');
    const before = new Date(Date.now() - 40 * 24 * 3600 * 1000);
    await insertVerdicts(s.db, deskId, [
      { itemId: d.itemIds[0], reviewerId: rev, categoryId: d.categoryIds.ok, createdAt: before },
      { itemId: d.itemIds[1], reviewerId: rev, categoryId: d.categoryIds.ok, createdAt: before },
      { itemId: d.itemIds[2], reviewerId: rev, categoryId: d.categoryIds.threat, createdAt: before },
    ]);
    await s.db.write(async (m) => {
      await s.db.query(m, `UPDATE items SET imported_at = $1 WHERE desk_id = $2`, [s.db.time(before), deskId]);
      await s.db.query(m, `UPDATE items SET state = 'decided' WHERE id IN ($1, $2, $3)`, d.itemIds.slice(0, 3));
    });
    b = await openBrowser(s.base);
  }, 120_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('saves the periods, refuses one out of range in words, and shows a dry run by category', async () => {
    const { page } = b;
    await signIn(page, s.base, 'sasha', PASSWORD);
    await page.goto(`${s.base}/desks/${deskId}/settings`);
    const panel = page.locator('section.retention-panel');
    await panel.getByRole('heading', { name: 'Retention' }).waitFor();

    await panel.getByLabel('Decided as ok').fill('5000');
    await panel.getByRole('button', { name: 'Save the periods' }).click();
    await expect(panel.getByRole('alert').innerText()).resolves.toMatch(/retention\.categories\.ok: .*1 to 3650/);

    await panel.getByLabel('Decided as ok').fill('30');
    await panel.getByLabel('Decided as threat').fill('1095');
    await panel.getByLabel('Items never decided, after their import').fill('60');
    await panel.getByRole('button', { name: 'Save the periods' }).click();
    await expect(panel.getByRole('status').innerText()).resolves.toContain('Retention periods saved');
    const desk = (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body;
    expect(desk.retention).toEqual({ decidedAfterDays: null, categories: { threat: 1095, ok: 30 }, openAfterDays: 60 });

    await panel.getByRole('button', { name: 'Dry run: what would go now' }).click();
    const table = panel.locator('table.retention-dry-run');
    await expect(table.locator('caption').innerText()).resolves.toContain('would erase 2 items now');
    const rows = await table
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((tr) => (tr as HTMLElement).innerText.replace(/\s+/g, ' ').trim()));
    expect(rows).toEqual([
      'decided as threat 0',
      'decided as harassment 0',
      'decided as ok 2',
      'decided, abstentions only 0',
      'never decided 0',
    ]);
    // Nothing was erased.
    const erased = await s.db.query(null, 'SELECT id FROM items WHERE erased_at IS NOT NULL');
    expect(erased).toEqual([]);
    expect(b.foreign).toEqual([]);
  });
});

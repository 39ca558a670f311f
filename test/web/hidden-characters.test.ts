import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

const PASSWORD = 'correct horse battery';
// A right-to-left override and its pop around a phrase, and a zero-width space splitting a word.
const TEXT = 'Meet me by the pond, I will \u202Efind you\u202C later. You are a clo\u200Bwn.';

describe.each(DATABASE_KINDS)('hidden characters on the queue screen on %s', (kind) => {
  let s: Stack;
  let b: Browser;
  let deskId = 0;

  beforeAll(async () => {
    s = await startStack(kind);
    const sup = await s.user('hc-sup', 'supervisor');
    await s.user('hc-rev', 'reviewer', PASSWORD);
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'Pond watch',
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['find you'] },
    });
    expect(d.status).toBe(201);
    deskId = d.body.id;
    await s.enrol(deskId);
    const imp = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, `${JSON.stringify({ text: TEXT })}\n`, {
      'content-type': 'application/x-ndjson',
    });
    expect(imp.status).toBe(202);
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      30_000,
      'import',
    );
    b = await openBrowser(s.base);
  }, 60_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('shows each bidirectional control and zero-width character as a named marker where it stands', async () => {
    const { page } = b;
    await signIn(page, s.base, 'hc-rev', PASSWORD);
    await page.goto(`${s.base}/desks/${deskId}/queue`);
    const text = page.locator('article.item .item-text');
    await text.waitFor();
    // The characters themselves are not in the page's text: markers stand in for them, in the written order.
    const shown = await text.innerText();
    expect(shown).not.toMatch(/[\u202E\u202C\u200B]/);
    expect(shown).toMatch(/I will RLO\s*find you\s*1?\s*PDF later\. You are a clo\s*ZWSP\s*wn\./);
    // Each marker is named for screen readers and for the mouse.
    const rlo = page.getByRole('img', { name: 'hidden character U+202E, right-to-left override' });
    await expect(rlo.count()).resolves.toBe(1);
    await expect(rlo.getAttribute('title')).resolves.toMatch(/^U\+202E RIGHT-TO-LEFT OVERRIDE: changes the direction/);
    await expect(
      page.getByRole('img', { name: 'hidden character U+200B, zero width space' }).getAttribute('title'),
    ).resolves.toMatch(/^U\+200B ZERO WIDTH SPACE: invisible/);
    await expect(page.locator('.item-text .hidden-char').count()).resolves.toBe(3);
    // The marker is visible: it takes room on the line.
    const box = await rlo.boundingBox();
    expect(box!.width).toBeGreaterThan(5);
    // The seed term after the override is still marked, and the reviewer is told what the markers are.
    await expect(page.locator('mark.seed').innerText()).resolves.toMatch(/find you/);
    await expect(page.locator('.hidden-legend').innerText()).resolves.toMatch(/holds 3 hidden character/);
  });
});

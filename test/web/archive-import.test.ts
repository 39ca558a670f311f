import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { PASSWORD } from '../support/web-desk.js';

// The form only calls the API, whose behaviour on both databases test/api/archive-import.test.ts checks;
// one database is enough here.
describe('the label options of the import screen', () => {
  let s: Stack;
  let b: Browser;
  let sup = '';
  let deskId = 0;

  beforeAll(async () => {
    s = await startStack('sqlite');
    sup = await s.user('sasha', 'supervisor', PASSWORD);
    const r = await s.call(sup, 'POST', '/api/desks', { name: 'Mossbank Commons', categories: ['threat', 'ok'] });
    expect(r.status).toBe(201);
    deskId = r.body.id;
    await s.enrol(deskId);
    b = await openBrowser(s.base);
  }, 120_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('sends the label column and the draw, and asks for the uniform-sample statement before a random archive', async () => {
    const { page } = b;
    await signIn(page, s.base, 'sasha', PASSWORD);
    await page.goto(`${s.base}/desks/${deskId}/import`);
    const rows = [
      { text: 'The pond path is closed for repairs until Friday', label: 'ok' },
      { text: 'Lovely turnout at the garden swap this weekend', label: 'ok' },
      { text: 'Anyone seen a grey cat near the allotments?', label: '' },
      { text: 'The bus shelter on Elm Row has a new bench', label: 'fine' },
    ];
    await page.locator('input[type=file]').setInputFiles({
      name: 'archive.ndjson',
      mimeType: 'application/x-ndjson',
      buffer: Buffer.from(rows.map((r) => JSON.stringify(r)).join('\n')),
    });
    await page.getByLabel('Label column').fill('label');
    await page.getByLabel(/^Random: the labels calibrate/).check();
    const submit = page.getByRole('button', { name: 'Import' });
    // A random archive needs the statement first.
    await expect(submit.isDisabled()).resolves.toBe(true);
    const statement = page.getByLabel(/uniform random sample of the same stream/);
    await statement.check();
    await expect(submit.isDisabled()).resolves.toBe(false);
    await submit.click();
    const progress = page.locator('section.import-progress[data-state=done]');
    await progress.waitFor({ timeout: 60_000 });
    await expect(progress.innerText()).resolves.toMatch(/Labelled \(random\)\s*2\b/);
    await expect(progress.innerText()).resolves.toMatch(/sasha stated on .* uniform random sample of the same stream/);
    await expect(progress.locator('table.row-errors').innerText()).resolves.toMatch(/4\s+label 'label' is "fine"/);

    const list = await eventually(
      async () => {
        const x = await s.call(sup, 'GET', `/api/desks/${deskId}/imports`);
        return x.body.imports[0]?.state === 'done' ? x.body.imports[0] : undefined;
      },
      30_000,
      'the import',
    );
    expect(list.labels).toMatchObject({ field: 'label', draw: 'random', labelled: 2 });
    expect(list.labels.uniformSample.statedBy).toBe('sasha');
    expect(b.foreign).toEqual([]);
  });
});

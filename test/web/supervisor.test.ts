import { keywordPrecisionReading, keywordRecallReading } from '../../apps/web/src/readings.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, screenshot, signIn, type Browser } from '../support/browser.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';
import { PASSWORD } from '../support/web-desk.js';

describe.each(DATABASE_KINDS)('the supervisor screens on %s', (kind) => {
  let s: Stack;
  let b: Browser;
  let rev: string;
  let sup: string;
  let deskId: number;
  const pool = syntheticPool(300, 11);
  const labels = new Map(pool.map((p) => [p.externalId, p.label]));

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sasha', 'supervisor', PASSWORD);
    rev = await s.user('robin', 'reviewer', PASSWORD);
    b = await openBrowser(s.base);
  }, 120_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('creates a desk with its categories and seed terms', async () => {
    const { page } = b;
    await signIn(page, s.base, 'sasha', PASSWORD);
    await page.getByRole('link', { name: 'New desk' }).click();
    await page.getByLabel('Name').fill('Mossbank Commons reports');
    await page.getByLabel('Categories, one per line').fill('threat\nharassment\nok');
    await page.getByLabel('threat', { exact: true }).fill('hurt, find you');
    await page.getByLabel('harassment', { exact: true }).fill('idiot, clown');
    await page.getByLabel('Retrain after this many new verdicts').fill('20');
    await page.getByRole('button', { name: 'Create the desk' }).click();
    await page.waitForURL(/\/desks\/\d+\/import$/);
    deskId = Number(new URL(page.url()).pathname.split('/')[2]);
    await s.enrol(deskId);
    const desk = (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body;
    expect(desk.categories.map((c: { name: string }) => c.name)).toEqual(['threat', 'harassment', 'ok']);
    expect(desk.seedTerms).toEqual({ threat: ['hurt', 'find you'], harassment: ['idiot', 'clown'] });
    expect(desk.retrainEvery).toBe(20);
  });

  it('refuses a desk with one category, with the reason on the screen', async () => {
    const { page } = b;
    await page.goto(`${s.base}/desks/new`);
    await page.getByLabel('Name').fill('too small');
    await page.getByLabel('Categories, one per line').fill('only');
    await page.getByRole('button', { name: 'Create the desk' }).click();
    await expect(page.getByRole('alert').innerText()).resolves.toContain('2 to 20 categories');
    await page.goto(`${s.base}/desks/${deskId}/import`);
  });

  it('imports a file with two bad rows: progress, counts and both errors with their row numbers', async () => {
    const { page } = b;
    await page.goto(`${s.base}/desks/${deskId}/import`);
    const rows = pool.map((p) => JSON.stringify({ text: p.text, externalId: p.externalId, source: 'board/general' }));
    rows.splice(10, 0, '{"text": "unterminated');
    rows.splice(200, 0, JSON.stringify({ source: 'board/general', note: 'no text here' }));
    await page.locator('input[type=file]').setInputFiles({
      name: 'reported-posts.ndjson',
      mimeType: 'application/x-ndjson',
      buffer: Buffer.from(`${rows.join('\n')}\n`),
    });
    await page.getByRole('button', { name: 'Import' }).click();
    const progress = page.locator('section.import-progress');
    await progress.waitFor();
    await expect(progress.locator('progress').count()).resolves.toBe(1);
    await page.locator('section.import-progress[data-state=done]').waitFor({ timeout: 60_000 });
    const figures = await progress.locator('dl.figures').innerText();
    expect(figures).toMatch(/Imported\s+300/);
    expect(figures).toMatch(/Rejected\s+2/);
    const errors = await progress.locator('table.row-errors tbody tr').allInnerTexts();
    expect(errors).toHaveLength(2);
    expect(errors[0]).toMatch(/^11\s+malformed JSON/);
    expect(errors[1]).toMatch(/^201\s+missing 'text'/);
    await screenshot(page, 'supervisor-import');
  });

  it('moves the coverage slider and sees the preview change, then applies the target', async () => {
    const { page } = b;
    // Reviewers' verdicts through the API until a model version serves the desk.
    for (let i = 0; i < 80; i++) {
      const l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
      if (l.status === 204) break;
      await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
        leaseId: l.body.lease.id,
        itemId: l.body.item.id,
        category: labels.get(l.body.item.externalId),
        clientId: `c${i}`,
      });
    }
    await eventually(
      async () => ((await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.currentModelVersion ? true : undefined),
      60_000,
      'a model version',
    );
    await s.waitForQueuesIdle(60_000, { ignoreDelayed: true });
    // No newer version may replace the one the screen previews while the test compares the two.
    await s.stopWorker();

    await page.goto(`${s.base}/desks/${deskId}/coverage`);
    const readout = page.locator('.readout');
    await readout.locator('.sure-share').waitFor();
    await expect(page.locator('svg.chart').count()).resolves.toBe(2);
    const before = await readout.innerText();
    expect(before).toContain('At 90 %');
    await page.getByRole('slider').focus();
    for (let i = 0; i < 25; i++) await page.keyboard.press('ArrowLeft');
    await expect(readout.getAttribute('data-target')).resolves.toBe('0.65');
    const after = await readout.innerText();
    expect(after).toContain('At 65 %');
    expect(after).not.toBe(before);
    // The readout is the preview's own figure for that target.
    const preview = (await s.call(sup, 'GET', `/api/desks/${deskId}/coverage-preview`)).body;
    const at65 = preview.points.find((p: { target: number }) => p.target === 0.65);
    expect(after).toContain(`${(at65.sureShare * 100).toFixed(0)} % of open items would be sure`);
    await page.getByRole('button', { name: 'Apply 65 %' }).click();
    await page.getByRole('status').filter({ hasText: 'Applied' }).waitFor();
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.coverageTarget).toBe(0.65);
  });

  it('settles a disagreement between two reviewers from the agreement screen', async () => {
    const { page } = b;
    const other = await s.user('kit', 'reviewer', PASSWORD);
    await s.enrol(deskId, ['kit']);
    await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { secondOpinionShare: 1 });
    await new Promise((r) => setTimeout(r, 2100)); // the desk settings cache lives 2 s
    const first = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    expect(
      (
        await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
          leaseId: first.body.lease.id,
          itemId: first.body.item.id,
          category: 'ok',
          clientId: 'd1',
        })
      ).status,
    ).toBe(201);
    // Older items are due for a second opinion too (the desk's default share): answer them as the first reviewer would have, until ours comes.
    let second = await s.call(other, 'POST', `/api/desks/${deskId}/leases`);
    for (let n = 0; second.body.item.id !== first.body.item.id; n++) {
      expect(n).toBeLessThan(40);
      await s.call(other, 'POST', `/api/desks/${deskId}/verdicts`, {
        leaseId: second.body.lease.id,
        itemId: second.body.item.id,
        category: labels.get(second.body.item.externalId),
        clientId: `d-other-${n}`,
      });
      second = await s.call(other, 'POST', `/api/desks/${deskId}/leases`);
    }
    expect(
      (
        await s.call(other, 'POST', `/api/desks/${deskId}/verdicts`, {
          leaseId: second.body.lease.id,
          itemId: second.body.item.id,
          category: 'threat',
          clientId: 'd2',
        })
      ).status,
    ).toBe(201);
    await s.call(sup, 'PATCH', `/api/desks/${deskId}`, { secondOpinionShare: 0.1 });

    await page.goto(`${s.base}/desks/${deskId}/disagreements`);
    const card = page.locator(`li.disagreement[data-item-id="${first.body.item.id}"]`);
    await card.waitFor();
    await expect(card.innerText()).resolves.toContain('Reviewers gave different categories');
    await card.getByLabel('Category').selectOption('harassment');
    await card.getByRole('button', { name: 'Settle' }).click();
    // The reason is required: the browser will not send the form without it.
    await card.getByLabel('Reason').fill('abuse aimed at a named neighbour; no threat');
    await card.getByRole('button', { name: 'Settle' }).click();
    await card.getByText('Settled as harassment').waitFor();
    const listed = (await s.call(sup, 'GET', `/api/desks/${deskId}/disagreements`)).body.disagreements.find(
      (d: { item: { id: number } }) => d.item.id === first.body.item.id,
    );
    expect(listed.settled).toMatchObject({
      category: 'harassment',
      reason: 'abuse aimed at a named neighbour; no threat',
      settledBy: 'sasha',
    });
  });

  it('shows progress per category and per reviewer on the overview', async () => {
    const { page } = b;
    await page.goto(`${s.base}/desks/${deskId}`);
    await page.locator('dl.figures').waitFor();
    const progress = (await s.call(sup, 'GET', `/api/desks/${deskId}/progress`)).body;
    await expect(page.locator('dl.figures').innerText()).resolves.toMatch(
      new RegExp(`Verdicts\\s+${progress.verdicts.total}`),
    );
    await expect(page.locator('table.data').innerText()).resolves.toContain('robin');
    await page.locator('svg.chart').first().waitFor();
    // Keyword counts: what the API says, in words and a table (the worker counts the pool some seconds after an import).
    const kc = (await s.call(sup, 'GET', `/api/desks/${deskId}/keyword-counts?period=week`)).body;
    const section = page.locator('section.keyword-counts');
    await expect(section.getByRole('heading', { name: 'Keyword counts over time' }).isVisible()).resolves.toBe(true);
    if (kc.categories.length === 0) {
      await expect(section.innerText()).resolves.toMatch(/appear once the desk has seed terms/);
    } else {
      const threat = section.getByRole('row').filter({ has: page.getByRole('rowheader', { name: 'threat' }) });
      await expect(threat.innerText()).resolves.toContain(String(kc.total.perCategory.threat.matches));
      // Each share has its reading beside it, and says when it rests on fewer than 30 random draws.
      const { precision, recall } = kc.total.perCategory.threat;
      await expect(threat.innerText()).resolves.toContain(keywordPrecisionReading(precision.estimate));
      await expect(threat.innerText()).resolves.toContain(keywordRecallReading(recall.estimate));
      await expect(threat.locator('.too-few').count()).resolves.toBe(
        (precision.n < 30 ? 1 : 0) + (recall.n < 30 ? 1 : 0),
      );
    }
    expect(b.foreign).toEqual([]);
  });
});

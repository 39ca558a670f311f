import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '../../apps/cli/src/demo-seed.js';
import { formatDemoBlock, type DemoSeedResult } from '#demo';
import { accountsInBlock } from '../demo/demo-block.js';
import { openBrowser, screenshot, signIn, type Browser } from '../support/browser.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

/**
 * The README's five-minute walkthrough, played on the demo desk in a real
 * browser: each step's screenshot is the one the README shows.
 */
describe('the walkthrough on the Mossbank Commons demo', () => {
  let s: Stack;
  let b: Browser;
  let seeded: DemoSeedResult;
  let accounts: Map<string, string>;

  beforeAll(async () => {
    s = await startStack('sqlite');
    seeded = (await seedDemo({ ...s.config, demo: true }))!;
    accounts = accountsInBlock(formatDemoBlock(`${s.base}/`, seeded));
    b = await openBrowser(s.base);
  }, 180_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('1. signs in: the cautions are on the first screen', async () => {
    const { page } = b;
    await page.goto(`${s.base}/`);
    await page.waitForURL(/\/signin/);
    await expect(page.locator('.cautions').innerText()).resolves.toContain('emergency services');
    await screenshot(page, '1-sign-in');
    await signIn(page, s.base, 'supervisor', accounts.get('supervisor')!);
  });

  it('2. the supervisor lets a simulated reviewer work and watches the first model versions appear', async () => {
    const { page } = b;
    await eventually(
      async () =>
        (await s.call(null, 'GET', `/api/imports/${seeded.importId}`, undefined, { cookie: await cookie() })).body
          .state === 'done'
          ? true
          : undefined,
      60_000,
      'the demo import',
    );
    await page.getByRole('link', { name: 'Mossbank Commons' }).click();
    await page.getByRole('button', { name: 'Let a simulated reviewer work for 2 minutes' }).click();
    await page.getByText(/Working until/).waitFor();
    // Two published versions give the learning curve a line.
    await eventually(
      async () => {
        const m = (
          await s.call(null, 'GET', `/api/desks/${seeded.deskId}/models`, undefined, { cookie: await cookie() })
        ).body;
        return m.models.filter((v: { state: string }) => v.state === 'published').length >= 3 ? true : undefined;
      },
      150_000,
      'three published versions',
    );
    await page.getByText(/Serving model version/).waitFor({ timeout: 10_000 });
    await page.locator('polyline').first().waitFor();
    // The button sits low on the page; the picture shows the counts and the learning curve instead.
    await page.evaluate(() => {
      const heading = Array.from(document.querySelectorAll('h2')).find(
        (h) => h.textContent === 'Verdicts per category',
      );
      heading?.scrollIntoView({ block: 'start' });
    });
    await screenshot(page, '2-supervisor-overview');
  });

  it('3. the coverage control previews what a target would mean', async () => {
    const { page } = b;
    await page.getByRole('link', { name: 'Coverage' }).click();
    await page.locator('.readout .sure-share').waitFor();
    await page.getByRole('slider').focus();
    for (let i = 0; i < 10; i++) await page.keyboard.press('ArrowLeft');
    await expect(page.locator('.readout').getAttribute('data-target')).resolves.toBe('0.8');
    await screenshot(page, '3-supervisor-coverage');
  });

  it('4. a reviewer works the queue: seed terms marked, the call in words, one key per category', async () => {
    const { page } = b;
    await page.getByRole('button', { name: 'Sign out' }).click();
    await signIn(page, s.base, 'reviewer', accounts.get('reviewer')!);
    await page.getByRole('link', { name: 'Mossbank Commons' }).click();
    await page.locator('article.item').waitFor();
    // Show an item with a marked seed term when one comes up within a few verdicts.
    for (let i = 0; i < 15 && (await page.locator('mark.seed').count()) === 0; i++) {
      const id = await page.locator('article.item').getAttribute('data-item-id');
      await page.keyboard.press('0');
      await page.waitForFunction(
        (prev) => document.querySelector('article.item')?.getAttribute('data-item-id') !== prev,
        id,
      );
    }
    await page.locator('.call .call-word').waitFor();
    await screenshot(page, '4-reviewer-queue');
  });

  it('5. an auditor reads a model version and the decision trail, where simulated verdicts are marked', async () => {
    const { page } = b;
    await page.getByRole('button', { name: 'Sign out' }).click();
    await signIn(page, s.base, 'auditor', accounts.get('auditor')!);
    await page.getByRole('link', { name: 'Mossbank Commons' }).click();
    await page.locator('table.models-table').waitFor();
    const current = (await s.call(null, 'GET', `/api/desks/${seeded.deskId}`, undefined, { cookie: await cookie() }))
      .body.currentModelVersion;
    await page.getByRole('link', { name: `v${current}`, exact: true }).click();
    await page.getByRole('heading', { name: 'Quality on the calibration set', exact: false }).waitFor();
    await screenshot(page, '5-auditor-model-version');
    await page.getByRole('link', { name: 'Trail', exact: true }).click();
    await page.locator('table.trail tbody tr').first().waitFor();
    await expect(page.locator('table.trail').innerText()).resolves.toContain('simulated');
    await screenshot(page, '6-auditor-trail');
    expect(b.foreign).toEqual([]);
  });

  it('stops the simulated reviewer from the supervisor screen', async () => {
    const { page } = b;
    await page.getByRole('button', { name: 'Sign out' }).click();
    await signIn(page, s.base, 'supervisor', accounts.get('supervisor')!);
    await page.goto(`${s.base}/desks/${seeded.deskId}`);
    await page.getByRole('button', { name: 'Stop it' }).click();
    await page.getByText(/Last run: .* verdicts \(stopped\)/).waitFor({ timeout: 15_000 });
  });

  let session: string | null = null;
  async function cookie(): Promise<string> {
    if (!session) {
      const login = await s.call(null, 'POST', '/api/auth/login', {
        name: 'supervisor',
        password: accounts.get('supervisor')!,
      });
      session = login.headers.get('set-cookie')!.split(';')[0]!;
    }
    return session;
  }
});

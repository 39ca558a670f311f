import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { openBrowser, signIn, type Browser } from '../support/browser.js';
import { startStack, type Stack } from '../support/stack.js';

const PASSWORD = 'correct horse battery';

describe.each(DATABASE_KINDS)('accounts and desk roles on the screens on %s', (kind) => {
  let s: Stack;
  let b: Browser;
  let sup = '';
  const desk = { north: 0, south: 0 };

  beforeAll(async () => {
    s = await startStack(kind, { worker: false });
    await s.user('root', 'admin', PASSWORD);
    sup = await s.user('sasha', 'supervisor', PASSWORD);
    await s.user('kit', 'reviewer', PASSWORD);
    for (const [key, name] of [
      ['north', 'North pond'],
      ['south', 'South gate'],
    ] as const) {
      const d = await s.call(sup, 'POST', '/api/desks', { name, categories: ['threat', 'ok'] });
      expect(d.status).toBe(201);
      desk[key] = d.body.id;
    }
    b = await openBrowser(s.base);
  }, 60_000);
  afterAll(async () => {
    await (b as Browser | undefined)?.close();
    await (s as Stack | undefined)?.stop();
  });

  it('lets the admin create, disable, enable and reset accounts and give roles per desk', async () => {
    const { page } = b;
    await signIn(page, s.base, 'root', PASSWORD);
    // The admin sees every desk, as not a member, and reaches the accounts screen from the top bar.
    await page.locator('.desk-card').nth(1).waitFor();
    await expect(page.locator('.desk-card').count()).resolves.toBe(2);
    await expect(page.locator('.desk-card[data-desk-role="none"]').count()).resolves.toBe(2);
    await page.getByRole('link', { name: 'Accounts', exact: true }).click();
    await page.waitForURL(`${s.base}/accounts`);

    const form = page.getByRole('form', { name: 'New account' });
    await form.getByLabel('Name').fill('lee');
    await form.getByLabel('Account role').selectOption('auditor');
    await form.getByLabel('Password (optional)').fill('a-long-first-passphrase');
    await form.getByRole('button', { name: 'Create account' }).click();
    await expect(form.locator('.new-token code').innerText()).resolves.toMatch(/^cbt_/);
    const lee = page.locator('tr[data-user="lee"]');
    await expect(lee.locator('td').nth(1).innerText()).resolves.toBe('active');

    await lee.getByRole('button', { name: 'Disable lee' }).click();
    await lee.getByRole('button', { name: 'Enable lee' }).waitFor();
    await expect(lee.locator('td').nth(1).innerText()).resolves.toBe('disabled');
    expect(
      (await s.call('', 'POST', '/api/auth/login', { name: 'lee', password: 'a-long-first-passphrase' })).status,
    ).toBe(401);
    await lee.getByRole('button', { name: 'Enable lee' }).click();
    await lee.getByRole('button', { name: 'Disable lee' }).waitFor();

    // A password the policy refuses shows the server's reason; a good one is set.
    const kit = page.locator('tr[data-user="kit"]');
    await kit.getByRole('button', { name: 'Reset password of kit' }).click();
    await kit.getByLabel('New password for kit').fill('password');
    await kit.getByRole('button', { name: 'Set password' }).click();
    // Wait for the refusal itself: the notice of the step before may still be on the screen.
    await page
      .locator('main p.error[role="alert"]')
      .filter({ hasText: /common/ })
      .waitFor();
    await kit.getByLabel('New password for kit').fill('kit-has-a-new-passphrase');
    await kit.getByRole('button', { name: 'Set password' }).click();
    await page.getByText('New password set for kit').waitFor();

    // The last admin cannot demote itself: the refusal is shown and nothing changes.
    await page.getByLabel('Account role of root').selectOption('reviewer');
    await page.getByText(/root is the last enabled admin/).waitFor();
    expect((await s.call(s.tokens.root, 'GET', '/api/auth/me')).body.role).toBe('admin');

    // kit supervises North pond and reviews on South gate.
    const members = page.getByRole('region', { name: 'Desk members' });
    for (const [name, role] of [
      ['North pond', 'supervisor'],
      ['South gate', 'reviewer'],
    ] as const) {
      await members.getByLabel('Desk to manage').selectOption({ label: name });
      await members.locator('tr[data-member="sasha"]').waitFor();
      const add = page.getByRole('form', { name: `Add a member to ${name}` });
      await add.getByLabel('Account').selectOption({ label: 'kit' });
      await add.getByLabel(`Role on ${name}`).selectOption(role);
      await add.getByRole('button', { name: `Add to ${name}` }).click();
      await members.locator('tr[data-member="kit"]').waitFor();
    }
    // The desk keeps its last supervisor.
    await members.getByRole('button', { name: 'Remove sasha from South gate' }).click();
    await page.getByText(/keeps at least one supervisor/).waitFor();
    // lee joins South gate, then leaves it again.
    const add = page.getByRole('form', { name: 'Add a member to South gate' });
    await add.getByLabel('Account').selectOption({ label: 'lee' });
    await add.getByLabel('Role on South gate').selectOption('auditor');
    await add.getByRole('button', { name: 'Add to South gate' }).click();
    await members.locator('tr[data-member="lee"]').waitFor();
    await members.getByLabel('Role of lee on South gate').selectOption('reviewer');
    await page.getByText('lee is now reviewer on South gate.').waitFor();
    await members.getByRole('button', { name: 'Remove lee from South gate' }).click();
    await members.locator('tr[data-member="lee"]').waitFor({ state: 'detached' });

    const roles = async (deskId: number) =>
      Object.fromEntries(
        (
          (await s.call(sup, 'GET', `/api/desks/${deskId}/members`)).body.members as Array<{
            name: string;
            role: string;
          }>
        ).map((m) => [m.name, m.role]),
      );
    expect(await roles(desk.north)).toEqual({ kit: 'supervisor', sasha: 'supervisor' });
    expect(await roles(desk.south)).toEqual({ kit: 'reviewer', sasha: 'supervisor' });
  });

  it('shows a user the sections of their role on each desk', async () => {
    const { page } = b;
    await b.context.clearCookies();
    await signIn(page, s.base, 'kit', 'kit-has-a-new-passphrase');
    await page.locator('.desk-card').nth(1).waitFor();
    await expect(page.locator('.desk-card[data-desk-role="supervisor"] h2').innerText()).resolves.toBe('North pond');
    await expect(page.locator('.desk-card[data-desk-role="reviewer"] h2').innerText()).resolves.toBe('South gate');
    // No accounts screen for a non-admin, in the bar or by address.
    await expect(page.getByRole('link', { name: 'Accounts', exact: true }).count()).resolves.toBe(0);

    const tabs = () => page.locator('nav.desk-tabs a').allInnerTexts();
    await page.goto(`${s.base}/desks/${desk.north}`);
    await page.locator('main h1').waitFor();
    await expect(tabs()).resolves.toEqual([
      'Overview',
      'Import',
      'Coverage',
      'Settings',
      'Models',
      'Agreement',
      'Trail',
    ]);
    await expect(page.locator('nav.desk-tabs .desk-name').innerText()).resolves.toMatch(
      /North pond \(supervisor here\)/,
    );

    await page.goto(`${s.base}/desks/${desk.south}/queue`);
    await page.locator('main h1, main article.item, main .empty-queue').first().waitFor();
    await expect(tabs()).resolves.toEqual(['Queue']);
    // A supervisor's screen of the desk where kit reviews is refused, and says why.
    await page.goto(`${s.base}/desks/${desk.south}/settings`);
    await page.getByRole('alert').filter({ hasText: 'Not open to your role' }).waitFor();
    await expect(page.getByRole('alert').innerText()).resolves.toMatch(
      /You are signed in as kit, a reviewer on this desk/,
    );
    await page.goto(`${s.base}/accounts`);
    await page.getByRole('alert').filter({ hasText: 'Not open to your role' }).waitFor();
    // A desk kit is not on looks like no desk at all.
    await page.goto(`${s.base}/desks/999999/queue`);
    await page.getByRole('alert').filter({ hasText: 'No such desk' }).waitFor();
  });
});

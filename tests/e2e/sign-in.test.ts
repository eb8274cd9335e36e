import type { Browser } from 'playwright-core';
import { START_PATH } from '../../components/features/nav/start-path';
import { NAV_ITEMS } from '../../components/features/nav/nav-items';
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForCount, waitForText } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(180_000);

describe('signing in as each demo role (browser)', () => {
  let s: SeededServer;
  let browser: Browser;
  beforeAll(async () => {
    s = await startSeededServer();
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
  });

  it('sends a signed-out visitor to the sign-in screen and explains a wrong password', async () => {
    for (const [name, viewport] of Object.entries(VIEWPORTS)) {
      const page = await browser.newPage({ viewport });
      await page.goto(s.server.baseUrl + '/users', { waitUntil: 'networkidle' });
      await page.waitForURL(/\/sign-in$/);
      await page.getByTestId('sign-in-username').fill('clerk');
      await page.getByTestId('sign-in-password').fill('not-the-password');
      await page.getByTestId('sign-in-submit').click();
      await waitForText(page.getByTestId('sign-in-error'), 'The user name or password is wrong.', { exact: true });
      await screenshot(page, `sign-in-${name}`);
      await page.close();
    }
  });

  for (const account of DEMO_ACCOUNTS) {
    it(`${account.username} (${account.role}) lands on its own start screen and sees only its navigation`, async () => {
      const page = await browser.newPage({ viewport: VIEWPORTS.wide });
      await signInThroughUi(page, s.server.baseUrl, account.username, DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === START_PATH[account.role]);
      await waitForText(page.getByTestId('signed-in-name'), account.displayName, { exact: true });
      const nav = page.getByRole('navigation');
      for (const item of NAV_ITEMS) {
        const shown = item.roles === 'all' || item.roles.includes(account.role);
        await waitForCount(nav.getByRole('link', { name: item.label, exact: true }), shown ? 1 : 0);
      }
      await page.getByTestId('sign-out').click();
      await page.waitForURL(/\/sign-in$/);
      await page.close();
    });
  }

  it('lets the administrator see the accounts and the access log with the sign-ins', async () => {
    for (const [name, viewport] of Object.entries(VIEWPORTS)) {
      const page = await browser.newPage({ viewport });
      await signInThroughUi(page, s.server.baseUrl, 'admin', DEMO_PASSWORD);
      await page.getByTestId('user-examiner2').waitFor();
      await screenshot(page, `users-${name}`);
      await page.goto(s.server.baseUrl + '/access-log', { waitUntil: 'networkidle' });
      await page
        .getByTestId('log-filter-user')
        .waitFor()
        .catch(async (e) => {
          await screenshot(page, `debug-access-log-${name}`);
          throw e;
        });
      await page.getByTestId('log-filter-user').fill('admin');
      await page.getByTestId('log-filter-apply').click();
      await page.getByText('signed in').first().waitFor();
      await screenshot(page, `access-log-${name}`);
      await page.close();
    }
  });
});

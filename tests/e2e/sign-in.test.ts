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

  it("fetches a screen's own script on its first visit, from the server and within its Content-Security-Policy", async () => {
    // Async routes (docs/design.md#web-bundle): the page loads the shared scripts, and each
    // screen's code arrives when the screen is first opened, without a page load.
    const page = await browser.newPage({ viewport: VIEWPORTS.wide });
    const problems: string[] = [];
    page.on('pageerror', (e) => problems.push(e.message));
    // Chromium reports a blocked script on the console ("Refused to load the script ... because
    // it violates the following Content Security Policy directive"); failed API calls such as
    // the signed-out /api/auth/me are reported there too and are expected.
    page.on('console', (m) => {
      if (/Content Security Policy|Refused to/i.test(m.text())) problems.push(m.text());
    });
    const scripts: { path: string; status: number }[] = [];
    page.on('response', (r) => {
      const { pathname } = new URL(r.url());
      if (pathname.startsWith('/_expo/static/js/')) scripts.push({ path: pathname, status: r.status() });
    });
    await signInThroughUi(page, s.server.baseUrl, 'admin', DEMO_PASSWORD);
    await page.getByTestId('user-examiner2').waitFor();
    const isAccessLog = (p: string) => /\/access-log-[0-9a-f]+\.js$/.test(p);
    if (scripts.some((x) => isAccessLog(x.path)))
      throw new Error(`the access log's script was loaded before its screen was opened: ${JSON.stringify(scripts)}`);
    const pageLoads = await page.evaluate(() => performance.getEntriesByType('navigation').length);

    await page.getByRole('navigation').getByRole('link', { name: 'Access log', exact: true }).click();
    await page.getByTestId('log-filter-user').waitFor();
    const fetched = scripts.filter((x) => isAccessLog(x.path));
    if (fetched.length !== 1 || fetched[0].status !== 200) throw new Error(`expected the access log's script once with 200, got ${JSON.stringify(scripts)}`);
    // The same document: the screen came by client-side navigation, not a page load.
    if ((await page.evaluate(() => performance.getEntriesByType('navigation').length)) !== pageLoads) throw new Error('the page was reloaded');
    if (problems.length > 0) throw new Error(`errors in the page: ${problems.join(' | ')}`);
    await page.close();
  });

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

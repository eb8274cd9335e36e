import type { Browser } from 'playwright-core';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForText } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(240_000);

describe('status screen in the browser (built web app served by the real server)', () => {
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

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    it(`shows the database as up in the shipped font (${name} ${viewport.width}×${viewport.height})`, async () => {
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'supervisor', DEMO_PASSWORD);
      await page.goto(s.server.baseUrl + '/status', { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('health-database-state'), 'Up', { exact: true });
      await waitForText(page.getByTestId('health-overall'), 'All services are up.', { exact: true });

      // The heading is set in the shipped typeface, and the browser really loaded it.
      const heading = page.getByRole('heading', { name: 'System status' });
      const family = await heading.evaluate((el) => getComputedStyle(el).fontFamily);
      expect(family).toContain('AtkinsonHyperlegible');
      const loaded = await page.evaluate(async () => {
        await document.fonts.ready;
        return [...document.fonts].filter((f) => f.status === 'loaded').map((f) => f.family.replace(/"/g, ''));
      });
      expect(loaded).toEqual(expect.arrayContaining(['AtkinsonHyperlegible', 'AtkinsonHyperlegible-Bold']));

      await screenshot(page, `status-${name}`);
      expect(errors).toEqual([]);
      await page.close();
    });
  }

  it('shows the cautions on the about page', async () => {
    const page = await browser.newPage({ viewport: VIEWPORTS.phone });
    await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
    await page.goto(s.server.baseUrl + '/about', { waitUntil: 'networkidle' });
    await waitForText(page.getByTestId('cautions'), /prove nothing alone/);
    await screenshot(page, 'about-phone');
    await page.close();
  });
});

import type { Browser } from 'playwright-core';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForText } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(240_000);

describe('scoring profile screen (supervisor, browser)', () => {
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

  it('saves changed weights as a new version and shows it active', async () => {
    const page = await browser.newPage({ viewport: VIEWPORTS.wide });
    await signInThroughUi(page, s.server.baseUrl, 'supervisor', DEMO_PASSWORD);
    await page.goto(s.server.baseUrl + '/scoring', { waitUntil: 'networkidle' });
    await page.getByTestId('weight-cashHeavy').fill('2');
    await page.getByTestId('profile-note').fill('Less weight on cash-heavy trades');
    await page.getByTestId('save-profile').click();
    // Saving makes the version active for every new batch: it asks first, in words (issue 14).
    // The confirmation is the shared dialog (components/ui/confirm-dialog.tsx): its question and
    // its consequence are separate lines, read one after the other.
    await waitForText(page.getByTestId('confirm-save-title'), /make it active\?$/);
    await waitForText(page.getByTestId('confirm-save-consequence'), /^From then on every batch loaded is scored with it/);
    await page.getByTestId('confirm-save-confirm').click();
    // The new version is one past the newest the migrations installed (not a fixed number:
    // a migration may add a version of the defaults).
    const saved = page.getByText(/^Saved as version \d+; new batches are scored with it\.$/);
    const message = await waitForText(saved, /^Saved as version \d+;/).catch(async (e) => {
      await screenshot(page, 'debug-scoring-save');
      throw e;
    });
    const version = Number(/version (\d+)/.exec(message)![1]);
    expect(version).toBeGreaterThanOrEqual(2);
    // The list of versions refetches after the save: wait for the new one to show.
    await waitForText(page.getByTestId('profile-versions'), `v${version}`);
    await waitForText(page.getByTestId('profile-versions'), 'Less weight on cash-heavy trades');
    await screenshot(page, 'scoring-wide');
    await page.close();
  });

  it('refuses an empty note with the reason, on a phone', async () => {
    const page = await browser.newPage({ viewport: VIEWPORTS.phone });
    await signInThroughUi(page, s.server.baseUrl, 'supervisor', DEMO_PASSWORD);
    await page.goto(s.server.baseUrl + '/scoring', { waitUntil: 'networkidle' });
    await page.getByTestId('save-profile').click();
    await page.getByText('Say in a few words why the weights change').waitFor();
    await screenshot(page, 'scoring-phone');
    await page.close();
  });
});

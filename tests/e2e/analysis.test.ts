/**
 * The Digit analysis screen in a browser (issue 15): an examiner uploads a CSV ledger, splits
 * it by account, and reads the four tests as charts with their figures and the caution; and,
 * opened from a case, chooses a pool of the returns on file (one line code in the batch),
 * keeps its analysis with the case and finds it on the case screen.
 * Screenshots at 390x844 and 1280x800 (tests/e2e/screenshots/analysis-*.png).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { createDataSource } from '../../server/db/data-source';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { expectNoSeriousAxeViolations, launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForText } from '../helpers/browser';
import { caseInReview } from '../helpers/letter-cases';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(300_000);

describe('Digit analysis screen (browser)', () => {
  let s: SeededServer;
  let browser: Browser;
  let dir: string;
  beforeAll(async () => {
    s = await startSeededServer({ scoredBatch: { seed: 'e2e-analysis', returns: 200, plantShare: 0.1 } });
    browser = await launchBrowser();
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-analysis-e2e-'));
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('analyses an uploaded CSV column split by account, with charts, figures and the caution; axe-core finds nothing serious before or after', async () => {
    // 20,000 invented ledger lines, amounts log-uniform over five decades (Benford-like).
    const lines = Array.from(
      { length: 20_000 },
      (_, i) => `${['stock', 'wages', 'rent', 'fuel'][i % 4]},${(10 ** (1 + ((i * 7919) % 20_000) / 4000)).toFixed(2)}`,
    );
    const file = path.join(dir, 'ledger.csv');
    fs.writeFileSync(file, `account,amount\n${lines.join('\n')}\n`);
    for (const [name, viewport] of Object.entries(VIEWPORTS)) {
      const page = await browser.newPage({ viewport });
      await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
      await page.goto(s.server.baseUrl + '/analysis', { waitUntil: 'networkidle' });
      await page.getByTestId('analysis-pick').waitFor();
      await expectNoSeriousAxeViolations(page, `digit analysis, nothing chosen yet ${name}`);
      const chooser = page.waitForEvent('filechooser');
      await page.getByTestId('analysis-pick').click();
      await (await chooser).setFiles(file);
      await waitForText(page.getByTestId('analysis-file-name'), 'ledger.csv');
      await page.getByTestId('analysis-column-field').fill('amount');
      await page.getByTestId('analysis-by-field').fill('account');
      await page.getByTestId('analysis-run').click();
      await page.getByTestId('analysis-result').waitFor({ timeout: 120_000 });
      await waitForText(page.getByTestId('analysis-result'), '20,000 amounts');
      await page.getByTestId('analysis-lastTwo').waitFor();
      await waitForText(page.getByTestId('analysis-split'), 'By account (4 groups');
      await waitForText(page.getByTestId('analysis-screen'), 'proves nothing');
      await expectNoSeriousAxeViolations(page, `digit analysis with its results ${name}`);
      await screenshot(page, `analysis-${name}`);
      await page.getByTestId('analysis-lastTwo').scrollIntoViewIfNeeded();
      await screenshot(page, `analysis-charts-${name}`);
      await page.close();
    }
  });

  it('opened from a case, analyses a pool of one line code in the batch, keeps it with the case and shows it there', async () => {
    const ds = createDataSource(s.db.url, { poolSize: 1 });
    await ds.initialize();
    let caseId: string;
    try {
      const [u] = await ds.query(`SELECT id FROM app_user WHERE username = 'examiner'`);
      ({ caseId } = await caseInReview(ds, { user: { id: u.id, username: 'examiner', role: 'examiner' } }));
    } finally {
      await ds.destroy();
    }
    const batchId = s.batch!.batchId;
    const page = await browser.newPage({ viewport: VIEWPORTS.phone });
    await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
    await page.goto(`${s.server.baseUrl}/cases/${caseId}`, { waitUntil: 'networkidle' });
    await page.getByTestId('case-analyses-open-screen').click();
    await page.getByTestId('analysis-case').waitFor({ timeout: 60_000 });
    await page.getByTestId('analysis-source-pool').click();
    await page.getByTestId('analysis-pool-kind-lineCode').click();
    await page.getByTestId('analysis-line-code-inc.wages').click();
    await page.getByTestId(`analysis-batch-${batchId}`).click();
    await expectNoSeriousAxeViolations(page, 'digit analysis, a pool chosen, opened from a case');
    await page.getByTestId('analysis-keep').click();
    await waitForText(page.getByTestId('analysis-source-label'), 'kept with the case');
    await waitForText(page.getByTestId('analysis-source-label'), 'Line Wages (inc.wages), Batch');
    await page.getByTestId('analysis-firstDigit').waitFor();
    await expectNoSeriousAxeViolations(page, 'digit analysis of a pool with its results');
    await screenshot(page, 'analysis-pool-phone');
    await page.getByText('← Back to the case').click();
    await waitForText(page.getByTestId('case-analyses'), 'Line Wages (inc.wages), Batch');
    await page.getByTestId('case-analysis-xlsx').waitFor();
    // The saved working paper as the case shows it, at both sizes, for a person to look at.
    await page.getByTestId('case-analyses').scrollIntoViewIfNeeded();
    await screenshot(page, 'case-working-paper-phone');
    // The wide layout is a different tree: load it afresh rather than catch it mid-change.
    await page.setViewportSize(VIEWPORTS.wide);
    await page.reload({ waitUntil: 'networkidle' });
    await waitForText(page.getByTestId('case-analyses'), 'Line Wages (inc.wages), Batch');
    await page.getByTestId('case-analyses').scrollIntoViewIfNeeded();
    await screenshot(page, 'case-working-paper-wide');
    await page.close();
  });
});

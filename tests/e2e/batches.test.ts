/**
 * The Batches screen in a real browser against the real server: the clerk signs in,
 * uploads a batch with errors and reads the report, uploads a good batch and sees its
 * counts and scoring progress, and sends the same file again.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForCount, waitForText } from '../helpers/browser';
import { csv, csvBatch, LINES_HEADER, RETURNS_HEADER, tmpDir } from '../helpers/batches';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(180_000);

function badFiles(tag: string): string[] {
  const dir = tmpDir();
  const returns = path.join(dir, 'returns.csv');
  const lines = path.join(dir, 'line_items.csv');
  fs.writeFileSync(returns, csv([RETURNS_HEADER, `${tag}-1,012345678,2024,Maud Fennick,retail,PRP-0001,,`, `${tag}-2,12345678,2024,Ivo Brackley,bakery,,,`]));
  fs.writeFileSync(
    lines,
    csv([
      LINES_HEADER,
      `${tag}-1,inc.business.receipts,52000.00`,
      `${tag}-1,exp.business.supplies,"1,200.50"`,
      `${tag}-1,tot.income,50799.50`,
      `${tag}-9,inc.wages,10`,
    ]),
  );
  return [returns, lines];
}

async function choose(page: Page, files: string[]) {
  await page.getByTestId('batch-files').setInputFiles(files);
  await page.getByTestId('batch-chosen').waitFor();
}

describe('Batches screen (browser)', () => {
  let s: SeededServer;
  let browser: Browser;
  let good: string[];

  beforeAll(async () => {
    s = await startSeededServer();
    browser = await launchBrowser();
    const b = await csvBatch({ seed: 'e2e-good', returns: 120 });
    good = [b.files.returns!, b.files.line_items!, b.files.statements!];
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
  });

  it('wide: a clerk uploads a batch with errors, reads and filters the report, then uploads a good batch', async () => {
    const page = await browser.newPage({ viewport: VIEWPORTS.wide });
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await signInThroughUi(page, s.server.baseUrl, 'clerk', DEMO_PASSWORD);
    await page.waitForURL((u) => u.pathname === '/batches');
    await page.getByRole('heading', { name: 'Batches', exact: true }).waitFor();

    await choose(page, badFiles('W'));
    await page.getByTestId('batch-upload').click();
    await waitForText(page.getByTestId('upload-rejected'), /The batch was rejected: 4 problems found\. Nothing of it was stored\./);
    await page.getByTestId('upload-rejected-report').click();
    await page.waitForURL(/\/batches\/[0-9a-f-]{36}$/);
    await page.getByTestId('report').waitFor();
    await waitForText(page.getByTestId('batch-state'), 'Rejected', { exact: true });
    await waitForCount(page.getByTestId('report-row'), 4);
    await waitForText(page.getByTestId('report'), 'has 8 digits; a TIN has 9');
    await waitForText(page.getByTestId('report'), '"1,200.50" contains a comma');
    await screenshot(page, 'batch-report-wide');

    await page.getByTestId('report-filter').fill('comma');
    await waitForCount(page.getByTestId('report-row'), 1);
    await waitForText(page.getByTestId('report-count'), '1 of 4 lines', { exact: true });
    const download = page.waitForEvent('download');
    await page.getByTestId('report-download').click();
    expect((await download).suggestedFilename()).toMatch(/^batch-[0-9a-f]{8}-report\.xlsx$/);

    await page.goto(s.server.baseUrl + '/batches', { waitUntil: 'networkidle' });
    await choose(page, good);
    await page.getByTestId('batch-upload').click();
    await waitForText(page.getByTestId('upload-accepted'), /Accepted and stored: 120 returns/);
    await page.getByTestId('batch-list').getByText('Waiting for scoring').first().waitFor();
    await screenshot(page, 'batches-wide');
    await page.getByText('Open the batch and follow its scoring →').click();
    await waitForText(page.getByTestId('batch-returns'), '120', { exact: true });
    await waitForText(page.getByTestId('batch-scoring'), /0 of 120/);
    await screenshot(page, 'batch-accepted-wide');
    expect(errors).toEqual([]);
    await page.close();
  });

  it('phone: the same file again is recognised, and the report reads as cards', async () => {
    const page = await browser.newPage({ viewport: VIEWPORTS.phone });
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await signInThroughUi(page, s.server.baseUrl, 'clerk', DEMO_PASSWORD);
    await page.waitForURL((u) => u.pathname === '/batches');
    await choose(page, good);
    await page.getByTestId('batch-upload').click();
    await waitForText(page.getByTestId('upload-duplicate'), /already uploaded .* accepted; it is not stored twice/);
    await screenshot(page, 'batches-phone');

    await choose(page, badFiles('P'));
    await page.getByTestId('batch-upload').click();
    await page.getByTestId('upload-rejected-report').click();
    await page.getByTestId('report').waitFor();
    await waitForCount(page.getByTestId('report-row'), 4);
    await screenshot(page, 'batch-report-phone');
    expect(errors).toEqual([]);
    await page.close();
  });

  it('a supervisor follows the batches but has no upload', async () => {
    const page = await browser.newPage({ viewport: VIEWPORTS.wide });
    await signInThroughUi(page, s.server.baseUrl, 'supervisor', DEMO_PASSWORD);
    await page.getByRole('link', { name: 'Batches', exact: true }).click();
    await page.getByTestId('batch-list').waitFor();
    await page.getByText('Intake clerks upload batches; you can follow them here.').waitFor();
    // The note stands where the upload would: once it shows, the upload is known to be absent.
    expect(await page.getByTestId('batch-upload').count()).toBe(0);
    await page.close();
  });
});

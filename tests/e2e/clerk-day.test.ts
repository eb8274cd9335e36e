/**
 * The clerk's, the supervisor's and the administrator's day in a real browser at 390×844 and
 * 1280×800 (issue 14): the clerk opens a scored batch (its label, cases opened, score chart,
 * report) and a stalled one (ended after a confirmation); the supervisor follows the batch to
 * its cases in the queue; the administrator reads the access log (a bad date is an error on
 * its field) and unlocks a locked account and changes a role only after a confirmation.
 */
import { Client } from 'pg';
import type { Browser } from 'playwright-core';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForText } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(240_000);

describe("the clerk's day (browser)", () => {
  let s: SeededServer;
  let browser: Browser;
  let batchId: string;
  let cases: number;
  const stalled: Record<keyof typeof VIEWPORTS, string> = { phone: '', wide: '' };

  beforeAll(async () => {
    s = await startSeededServer({ scoredBatch: { seed: 'clerk-day', returns: 120, plantShare: 0.15 } });
    browser = await launchBrowser();
    batchId = s.batch!.batchId;
    const db = new Client({ connectionString: s.db.url });
    await db.connect();
    try {
      await db.query(`UPDATE filing_batch SET state = 'scored', scored_count = return_count WHERE id = $1 AND state <> 'scored'`, [batchId]);
      cases = (await db.query(`SELECT count(*)::int AS n FROM exam_case WHERE batch_id = $1`, [batchId])).rows[0].n;
      // Two checks a crash left behind ten minutes ago: 4,096 rows read, then nothing. Uploaded
      // 11 minutes ago, so "checked in 1x min" holds through the 8 minutes both tests may take.
      for (const k of ['phone', 'wide'] as const) {
        const r = await db.query(
          `INSERT INTO filing_batch (file_hash, format, file_names, state, rows_checked, progress_at, created_at, updated_at, label)
           VALUES (md5(random()::text) || md5(random()::text), 'xlsx', '{returns.xlsx}', 'validating', 4096,
                   now() - interval '10 minutes', now() - interval '11 minutes', now() - interval '10 minutes', $1) RETURNING id`,
          [`Post room, ${k} check`],
        );
        stalled[k] = r.rows[0].id;
      }
    } finally {
      await db.end();
    }
    expect(cases).toBeGreaterThan(0);
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
  });

  describe.each(['phone', 'wide'] as const)('at %s size', (size) => {
    it("the clerk's scored batch: label, cases opened, score chart, report; a stalled check is ended after asking", async () => {
      const page = await browser.newPage({ viewport: VIEWPORTS[size] });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'clerk', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/batches');
      await page
        .getByTestId(`batch-row-${batchId}`)
        .getByText(/^Batch \d+ · \d{1,2} [A-Z][a-z]{2} \d{4} · CSV files$/)
        .waitFor();
      await waitForText(page.getByTestId(`batch-row-check-${stalled[size]}`), 'stalled: open it to retry');
      await page.getByTestId(`batch-row-${batchId}`).click();
      await page.waitForURL((u) => u.pathname === `/batches/${batchId}`);
      await waitForText(page.getByTestId('batch-state'), 'Scored', { exact: true });
      await waitForText(page.getByTestId('batch-cases-opened'), String(cases), { exact: true });
      await page
        .getByTestId('batch-score-chart')
        .getByRole('img', { name: /^Scores of 120 returns in bands of 10 points/ })
        .waitFor();
      await waitForText(page.getByTestId('batch-cases-note'), 'Examiners and supervisors work these cases in the queue.');
      const download = page.waitForEvent('download');
      await page.getByTestId('batch-report-download').click();
      expect((await download).suggestedFilename()).toMatch(/^batch-[0-9a-f]{8}-report\.xlsx$/);
      await screenshot(page, `clerk-batch-scored-${size}`);

      await page.goto(`${s.server.baseUrl}/batches/${stalled[size]}`, { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('batch-stalled'), /This check has stalled: no row has been read for over 5 minutes \(4,096 rows checked in 1\d min/);
      await screenshot(page, `clerk-batch-stalled-${size}`);
      await page.getByTestId('batch-retry').click();
      await waitForText(page.getByTestId('confirm-dialog-consequence'), /nothing of it is stored\. Its file is freed/);
      await page.getByTestId('confirm-dialog-confirm').click();
      await waitForText(page.getByTestId('batch-state'), 'Rejected', { exact: true });
      await waitForText(page.getByTestId('report'), /stopped being checked.*Upload the same file again/);
      expect(errors).toEqual([]);
      await page.close();
    });

    it('the supervisor follows the batch to its cases in the queue', async () => {
      const page = await browser.newPage({ viewport: VIEWPORTS[size] });
      await signInThroughUi(page, s.server.baseUrl, 'supervisor', DEMO_PASSWORD);
      await page.goto(`${s.server.baseUrl}/batches/${batchId}`, { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('batch-cases-link'), `Open its ${cases} cases in the queue →`);
      await page.getByTestId('batch-cases-link').click();
      await page.waitForURL((u) => u.pathname === '/queue' && u.searchParams.get('batch') === batchId);
      await waitForText(page.getByTestId('queue-total'), new RegExp(`of ${cases} cases?`));
      await screenshot(page, `supervisor-batch-cases-${size}`);
      await page.close();
    });

    it('the administrator: the access log in words with a field error for a bad date; a locked account unlocked; a role saved after a confirmation', async () => {
      const locked = size === 'phone' ? 'examiner' : 'examiner2';
      for (let i = 0; i < 5; i++) {
        await fetch(`${s.server.baseUrl}/api/auth/login`, {
          method: 'POST',
          headers: { 'Content-Type': 'application/json' },
          body: JSON.stringify({ username: locked, password: 'not-the-password' }),
        });
      }
      const page = await browser.newPage({ viewport: VIEWPORTS[size] });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'admin', DEMO_PASSWORD);
      await page.goto(`${s.server.baseUrl}/access-log`, { waitUntil: 'networkidle' });
      await page.getByTestId('log-summary').getByText('Ended a stalled batch check').first().waitFor();
      await page.getByTestId('log-filter-from').fill('2026-02-31');
      await page.getByTestId('log-filter-apply').click();
      await page.getByText('There is no such date; check the day and month (YYYY-MM-DD)').waitFor();
      await screenshot(page, `admin-access-log-${size}`);

      await page.goto(`${s.server.baseUrl}/users`, { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('locked-accounts'), new RegExp(`\\(${locked}\\) · \\d+ min left`));
      await screenshot(page, `admin-users-locked-${size}`);
      await page.getByTestId(`unlock-${locked}`).click();
      await page.getByTestId(`user-${locked}-locked`).waitFor({ state: 'detached' });

      await page.getByTestId(`user-${locked}-edit`).click();
      await page.getByTestId(`user-${locked}-role`).getByText('Supervisor', { exact: true }).click();
      await page.getByTestId(`user-${locked}-save-role`).click();
      await waitForText(page.getByTestId('confirm-role-consequence'), /will see every case and its taxpayer data, assign cases/);
      await screenshot(page, `admin-users-role-confirm-${size}`);
      await page.getByTestId('confirm-role-confirm').click();
      await page.getByTestId('confirm-role').waitFor({ state: 'detached' });
      await waitForText(page.getByTestId(`user-${locked}`), 'Supervisor');

      await page.getByTestId(`user-${locked}-active`).click();
      await waitForText(page.getByTestId('confirm-deactivate-consequence'), /signed out everywhere at once/);
      await page.getByTestId('confirm-deactivate-cancel').click();
      await page.getByTestId('confirm-deactivate').waitFor({ state: 'detached' });
      await waitForText(page.getByTestId(`user-${locked}`), 'Active');
      expect(errors).toEqual([]);
      await page.close();
    });
  });
});

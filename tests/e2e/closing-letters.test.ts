/**
 * The case calendar and the letters that close the loop in a real browser (issue 13, with the
 * letters part of issue 14), at 390×844 and 1280×800: the assessment deadline on the queue
 * and on the case; the request form showing the address on file, a due-date error as it is
 * typed (checked against the office clock) and the letter's preview before it is sent;
 * closing with corrected figures by line code, the as filed / as corrected / difference
 * worked out as they are typed, and the adjustment proposal's preview before the closing is
 * confirmed. The proposal arrives in MailDev. Screenshots under tests/e2e/screenshots.
 */
import type { Browser } from 'playwright-core';
import type { DataSource } from 'typeorm';
import { addDays, isoToday } from '../../shared/letters';
import { createDataSource } from '../../server/db/data-source';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForText } from '../helpers/browser';
import { caseInReview, uniqueAddress } from '../helpers/letter-cases';
import { mailTo } from '../helpers/maildev';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(300_000);

describe('deadlines, letter previews and closing with corrected figures (browser)', () => {
  let s: SeededServer;
  let ds: DataSource;
  let browser: Browser;
  let examiner: { id: string; username: string; role: 'examiner' };

  beforeAll(async () => {
    s = await startSeededServer({ scoredBatch: { seed: 'e2e-closing', returns: 200, plantShare: 0.1 } });
    ds = createDataSource(s.db.url, { poolSize: 2 });
    await ds.initialize();
    const [u] = await ds.query(`SELECT id FROM app_user WHERE username = 'examiner'`);
    examiner = { id: u.id, username: 'examiner', role: 'examiner' };
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    if (ds?.isInitialized) await ds.destroy();
    await s?.close();
  });

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    const wide = name === 'wide';
    it(`deadline on queue and case, request preview, close adjusted with corrected figures (${name} ${viewport.width}×${viewport.height})`, async () => {
      const to = uniqueAddress(`closing-e2e-${name}`);
      const { caseId } = await caseInReview(ds, { user: examiner }, to);
      const [{ ref, assess_by: assessBy }] = await ds.query(
        `SELECT r.return_ref AS ref, to_char(c.assess_by, 'YYYY-MM-DD') AS assess_by FROM exam_case c JOIN tax_return r ON r.id = c.return_id WHERE c.id = $1`,
        [caseId],
      );
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);

      // The deadline on the queue (the examiner's own cases).
      await page.goto(`${s.server.baseUrl}/queue?q=${encodeURIComponent(ref)}`, { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId(wide ? `queue-deadline-${ref}` : `queue-card-deadline-${ref}`), `assess by ${assessBy}`);
      await screenshot(page, `closing-queue-deadline-${name}`);

      // And on the case.
      await page.goto(`${s.server.baseUrl}/cases/${caseId}`, { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('case-deadline-label'), `assess by ${assessBy}`);

      // The request form: the address on file, a due date checked as it is typed, the preview.
      await page.getByTestId('open-document-request').click();
      await waitForText(page.getByTestId('request-email-on-file'), `Address on file: ${to}.`);
      await page.getByTestId('request-item-0').fill('Payslips from each employer for the year');
      await page.getByTestId('request-due-date').fill(addDays(isoToday(), 2));
      await page.getByText('Give the taxpayer at least 7 days').waitFor();
      await page.getByTestId('request-due-date').fill(addDays(isoToday(), 21));
      await page.getByText('Give the taxpayer at least 7 days').waitFor({ state: 'detached' });
      await page.getByTestId('request-preview-button').click();
      await waitForText(page.getByTestId('request-preview-to'), `By e-mail to ${to}`);
      await waitForText(page.getByTestId('request-preview-text'), 'Payslips from each employer for the year');
      await page.getByTestId('request-preview').scrollIntoViewIfNeeded();
      await screenshot(page, `closing-request-preview-${name}`);
      await page.getByTestId('request-send').click();
      await page.getByTestId('letters-notice').waitFor();
      await waitForText(page.getByTestId('case-state'), 'Awaiting reply', { exact: true });

      // Closing adjusted: corrected wages; the figures are worked out as they are typed.
      await page.getByTestId('case-move-closed_adjusted').click();
      await page.getByTestId('close-form').waitFor();
      await page.getByTestId('close-outcome').fill('Wages from a second employer were left out of the return.');
      await page.getByTestId('close-line-inc.wages').fill('12,5');
      await page.getByText('Give the corrected amount as a number of 0 or more with at most 2 decimals').first().waitFor();
      await page.getByTestId('close-line-inc.wages').fill('250000.00');
      await waitForText(page.getByTestId('close-tax-difference'), /^Adjusted amount: \+[\d,]+\.\d\d \(the tax rises from/);
      await page.getByTestId('close-figures').scrollIntoViewIfNeeded();
      await screenshot(page, `closing-corrections-${name}`);

      // The proposal is read before the closing is confirmed.
      await page.getByTestId('close-preview').click();
      await waitForText(page.getByTestId('close-letter-to'), `By e-mail to ${to}`);
      await waitForText(page.getByTestId('close-letter-text'), 'as filed');
      await waitForText(page.getByTestId('close-letter-text'), 'Please answer by');
      await page.getByTestId('close-letter-preview').scrollIntoViewIfNeeded();
      await screenshot(page, `closing-proposal-preview-${name}`);
      await page.getByTestId('close-submit').click();
      await page.getByTestId('close-confirm').waitFor();
      await screenshot(page, `closing-confirm-${name}`);
      await page.getByTestId('close-confirm-confirm').click();
      await waitForText(page.getByTestId('case-state'), 'Closed, adjusted', { exact: true });
      await waitForText(page.getByTestId('case-outcome'), /Adjusted amount [\d,]+\.\d\d/);
      await waitForText(page.getByTestId('letters-panel'), 'Adjustment proposal');
      await page.getByTestId('case-outcome').scrollIntoViewIfNeeded();
      await screenshot(page, `closing-closed-${name}`);

      // The proposal reached the taxpayer's mailbox with its PDF.
      const until = Date.now() + 60_000;
      let proposal;
      // A failed MailDev list counts as "not yet", as in waitForMail (tests/helpers/maildev.ts).
      while (!(proposal = (await mailTo(to).catch(() => [])).find((m) => /^Proposed change to your/.test(m.subject))) && Date.now() < until) {
        await new Promise((r) => setTimeout(r, 250));
      }
      expect(proposal?.attachments?.some((a) => a.contentType === 'application/pdf')).toBe(true);
      expect(errors).toEqual([]);
      await page.close();
    });
  }
});

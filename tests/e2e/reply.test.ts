/**
 * The taxpayer's reply page in the browser (built web app served by the real server): the
 * request as the taxpayer sees it, choosing files, sending with progress, the thank-you,
 * and the used, expired and unknown-link pages, on a phone and a laptop screen.
 */
import { randomBytes } from 'node:crypto';
import type { Browser } from 'playwright-core';
import type { DataSource } from 'typeorm';
import { longDate } from '../../shared/letters';
import { createDataSource } from '../../server/db/data-source';
import { sendDocumentRequest } from '../../server/letters/letters.service';
import { createMailer, type Mailer } from '../../server/mail/mailer';
import { createUser } from '../helpers/auth';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForAttribute, waitForCount, waitForText } from '../helpers/browser';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { waitForMail } from '../helpers/maildev';
import { startServer, type RunningProcess } from '../helpers/processes';
import { loadScoredBatch } from '../helpers/scored-batch';
import { testConfig } from '../helpers/test-app';
import { createTestDatabase, type TestDatabase } from '../helpers/test-db';

jest.setTimeout(180_000);

const ITEMS = [
  'Receipts for the vehicle expenses claimed for 2024',
  'Bank statements for the business account, January to December 2024',
  "Your employer's wage statement for 2024",
];
const PDF = Buffer.concat([Buffer.from('%PDF-1.4\n'), randomBytes(40_000), Buffer.from('\n%%EOF\n')]);
const PNG = Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), randomBytes(60_000)]);

describe('taxpayer reply page in the browser', () => {
  let db: TestDatabase;
  let ds: DataSource;
  let mailer: Mailer;
  let server: RunningProcess & { baseUrl: string };
  let browser: Browser;
  let examiner: Awaited<ReturnType<typeof createUser>>['user'];
  let examinerPassword: string;

  /** A document request for a fresh case, sent through the real service; returns the token. */
  async function requestFor(): Promise<{ token: string; requestId: string; taxpayerName: string; tin: string }> {
    const to = uniqueAddress('reply-e2e');
    const { caseId } = await caseInReview(ds, { user: { id: examiner.id, username: examiner.username, role: 'examiner' } }, to);
    // No e-mail given: the letter goes to the address on file, which is ours.
    await sendDocumentRequest(
      { dataSource: ds, mailer, publicUrl: server.baseUrl },
      {
        actor: { id: examiner.id, username: examiner.username, displayName: examiner.displayName, role: 'examiner' },
        route: `POST /api/cases/${caseId}/document-requests`,
      },
      caseId,
      { items: ITEMS, dueDate: dueIn(21) },
    );
    const mail = await waitForMail(to);
    const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec(mail.text ?? '')![1];
    expect(mail.text).toContain(`${server.baseUrl}/reply/${token}`);
    const tp = (await ds.query(`SELECT t.name, t.tin FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [caseId]))[0];
    const requestId = (await ds.query(`SELECT id FROM document_request WHERE case_id = $1`, [caseId]))[0].id;
    return { token, requestId, taxpayerName: tp.name, tin: String(tp.tin) };
  }

  beforeAll(async () => {
    db = await createTestDatabase();
    ds = createDataSource(db.url, { poolSize: 2 });
    await ds.initialize();
    await loadScoredBatch(ds, { seed: 'reply-e2e', returns: 200, plantShare: 0.1 });
    ({ user: examiner, password: examinerPassword } = await createUser({ dataSource: ds }, 'examiner'));
    mailer = createMailer(testConfig(db.url));
    server = await startServer(db.url);
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
    mailer?.close();
    if (ds?.isInitialized) await ds.destroy();
    await db?.drop();
  });

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    it(`shows the request, sends the files with progress and thanks the taxpayer (${name} ${viewport.width}×${viewport.height})`, async () => {
      const r = await requestFor();
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await page.goto(`${server.baseUrl}/reply/${r.token}`, { waitUntil: 'networkidle' });
      await page.getByTestId('reply-request').waitFor();

      const wholePage = page.locator('body');
      await waitForText(wholePage, `Dear ${r.taxpayerName},`);
      for (const item of ITEMS) await waitForText(wholePage, item);
      await waitForText(page.getByTestId('reply-due'), `By ${longDate(dueIn(21))}`, { exact: true });
      await waitForText(wholePage, 'Aldermere Revenue Office');
      // Read once only after the request has shown in full: what must be absent is checked on it.
      const body = await waitForText(wholePage, 'This is a request for records, not a decision.');
      expect(body).not.toContain(r.tin);
      expect(body).not.toMatch(/score|risk|digit/i);
      // No sign-in needed: the page stayed where the link points.
      expect(new URL(page.url()).pathname).toBe(`/reply/${r.token}`);
      const family = await page.getByRole('heading', { name: 'Records requested' }).evaluate((el) => getComputedStyle(el).fontFamily);
      expect(family).toContain('AtkinsonHyperlegible');
      await screenshot(page, `reply-open-${name}`);

      // A file of the wrong kind is caught before sending.
      await page.getByTestId('reply-file-input').setInputFiles([{ name: 'notes.txt', mimeType: 'text/plain', buffer: Buffer.from('hello') }]);
      await waitForText(page.getByTestId('reply-problems'), 'notes.txt: send PDF, JPEG, PNG, CSV or XLSX files only.');
      await waitForAttribute(page.getByTestId('reply-send'), 'aria-disabled', 'true');
      await page.getByRole('button', { name: 'Remove notes.txt' }).click();

      await page.getByTestId('reply-file-input').setInputFiles([
        { name: 'vehicle-receipts-2024.pdf', mimeType: 'application/pdf', buffer: PDF },
        { name: 'wage-statement.png', mimeType: 'image/png', buffer: PNG },
      ]);
      await waitForText(page.getByTestId('reply-files'), 'vehicle-receipts-2024.pdf');
      await waitForText(page.getByTestId('reply-send'), 'Send 2 files', { exact: true });
      await screenshot(page, `reply-chosen-${name}`);
      // Everything in one send: the taxpayer says so, and the link closes after it.
      await page.getByTestId('reply-complete').click();
      await waitForAttribute(page.getByTestId('reply-complete'), 'aria-checked', 'true');

      // Hold the upload's answer a moment so the progress state can be seen.
      await page.route('**/api/replies/**', async (route) => {
        if (route.request().method() === 'POST') await new Promise((res) => setTimeout(res, 1500));
        await route.continue();
      });
      await page.getByTestId('reply-send').click();
      await page.getByTestId('reply-progress').waitFor();
      await screenshot(page, `reply-sending-${name}`);
      await waitForText(page.getByTestId('reply-thanks'), 'We received 2 files');
      await waitForText(page.getByTestId('reply-thanks'), 'vehicle-receipts-2024.pdf');
      await screenshot(page, `reply-thanks-${name}`);

      const stored = await ds.query(`SELECT file_name, content_type, size FROM reply_upload WHERE document_request_id = $1 ORDER BY file_name`, [r.requestId]);
      expect(stored).toEqual([
        { file_name: 'vehicle-receipts-2024.pdf', content_type: 'application/pdf', size: PDF.length },
        { file_name: 'wage-statement.png', content_type: 'image/png', size: PNG.length },
      ]);

      // Coming back to the link: closed.
      await page.unroute('**/api/replies/**');
      await page.goto(`${server.baseUrl}/reply/${r.token}`, { waitUntil: 'networkidle' });
      await page
        .getByTestId('reply-used')
        .waitFor()
        .catch(async (e) => {
          await screenshot(page, `debug-reply-used-${name}`);
          throw e;
        });
      await waitForCount(page.getByRole('heading', { name: 'This link is closed' }), 1);
      await screenshot(page, `reply-used-${name}`);
      expect(errors).toEqual([]);
      await page.close();
    });
  }

  it('says plainly when a link has expired or is not known', async () => {
    const r = await requestFor();
    await ds.query(`UPDATE document_request SET due_date = current_date - 1 WHERE id = $1`, [r.requestId]);
    for (const [name, viewport] of Object.entries(VIEWPORTS)) {
      const page = await browser.newPage({ viewport });
      await page.goto(`${server.baseUrl}/reply/${r.token}`, { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('reply-expired'), 'The due date for this request has passed');
      await waitForText(page.getByTestId('reply-contact'), '+44 1632 960 418');
      await screenshot(page, `reply-expired-${name}`);
      await page.close();
    }
    const page = await browser.newPage({ viewport: VIEWPORTS.phone });
    await page.goto(`${server.baseUrl}/reply/${randomBytes(32).toString('base64url')}`, { waitUntil: 'networkidle' });
    await waitForText(page.getByTestId('reply-not-found'), 'We could not find this link');
    await screenshot(page, 'reply-not-found-phone');
    await page.close();
  });
  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    it(`lets the examiner send a request from the case screen, see the reply come back and refer the case (${name})`, async () => {
      const to = uniqueAddress('panel-e2e');
      const { caseId } = await caseInReview(ds, { user: { id: examiner.id, username: examiner.username, role: 'examiner' } }, null);
      const context = await browser.newContext({ viewport });
      const page = await context.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, server.baseUrl, examiner.username, examinerPassword);
      await page.goto(`${server.baseUrl}/cases/${caseId}`, { waitUntil: 'networkidle' });
      const panel = page.getByTestId('letters-panel');
      // The panel says "Loading letters…" first: wait for the answer, never read it once.
      await waitForText(panel, 'No letters yet.');

      await page.getByTestId('open-document-request').click();
      // A soft check on the examiner's own words: a flagged word shows a warning under the item,
      // which goes once the item is reworded (docs/design.md#letters-and-replies).
      await page.getByTestId('request-item-0').fill('Receipts behind the risky pattern of round amounts');
      await waitForText(page.getByTestId('request-item-0-warning'), '"risk", "pattern"');
      await page.getByTestId('request-item-0').fill('Receipts for the vehicle expenses claimed for 2024');
      await page.getByTestId('request-item-0-warning').waitFor({ state: 'detached' });
      await page.getByTestId('request-item-add').click();
      await page.getByTestId('request-item-1').fill('Bank statements for the business account, 2024');
      // The taxpayer has no address on file: the form says so before Send and asks for one.
      await waitForText(page.getByTestId('request-email-none'), 'No e-mail address is on file for this taxpayer.');
      await page.getByTestId('request-preview-button').click();
      await page.getByText('No e-mail address is on file for this taxpayer: enter the address the request should go to').waitFor();
      await page.getByTestId('request-email').fill(to);
      await screenshot(page, `letters-panel-form-${name}`);
      // The letter is read before it goes (issue 14).
      await page.getByTestId('request-preview-button').click();
      await waitForText(page.getByTestId('request-preview-to'), `By e-mail to ${to}`);
      await waitForText(page.getByTestId('request-preview-text'), 'Bank statements for the business account, 2024');
      await page.getByTestId('request-send').click();
      await page.getByTestId('letters-notice').waitFor();
      // Read the mail at once: a test file starting elsewhere may empty the shared inbox.
      const mail = await waitForMail(to);
      await waitForText(page.getByTestId('case-state'), 'Awaiting reply', { exact: true });
      await waitForText(panel, 'Waiting for reply');
      await waitForText(panel, `Sent to ${to}`);
      await panel.scrollIntoViewIfNeeded();
      await screenshot(page, `letters-panel-sent-${name}`);

      // The taxpayer answers from their own browser (no session).
      const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec(mail.text ?? '')![1];
      const taxpayer = await browser.newContext({ viewport: VIEWPORTS.phone });
      const tp = await taxpayer.newPage();
      await tp.goto(`${server.baseUrl}/reply/${token}`, { waitUntil: 'networkidle' });
      await tp.getByTestId('reply-file-input').setInputFiles([{ name: 'receipts.pdf', mimeType: 'application/pdf', buffer: PDF }]);
      await tp.getByTestId('reply-send').click();
      await waitForText(tp.getByTestId('reply-thanks'), 'You can send more files through this link');
      // Records in parts (issue 13): a second look shows what came, and "everything" ends the wait.
      await tp.getByTestId('reply-more').click();
      await waitForText(tp.getByTestId('reply-received'), 'receipts.pdf');
      await screenshot(tp, `reply-parts-${name}`);
      await tp.getByTestId('reply-finish').click();
      await waitForText(tp.getByTestId('reply-thanks'), 'This link is now closed.');
      await taxpayer.close();

      await page.reload({ waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('case-state'), 'In review', { exact: true });
      await waitForText(panel, /1 file in one send; the taxpayer said that is everything/);
      await waitForText(panel, 'receipts.pdf');

      await page.getByTestId('open-referral').click();
      await page.getByTestId('referral-unit-income-matching').click();
      await page
        .getByTestId('referral-summary')
        .fill('The receipts do not cover the vehicle expenses claimed; income matching should compare the third-party statements.');
      await screenshot(page, `letters-panel-referral-${name}`);
      await page.getByTestId('referral-send').click();
      // Referring finishes the case: it asks first (issue 14).
      await waitForText(page.getByTestId('referral-confirm-consequence'), /finished as referred/);
      // The memo is read before it is written (issue 14).
      await waitForText(page.getByTestId('referral-preview-text'), /Referral memo RM-\(given on referring\)[\s\S]*income matching should compare/);
      await screenshot(page, `referral-memo-preview-${name}`);
      await page.getByTestId('referral-confirm-confirm').click();
      await page
        .getByTestId('letters-notice')
        .waitFor()
        .catch(async (e) => {
          await screenshot(page, `debug-referral-${name}`);
          throw e;
        });
      await waitForText(page.getByTestId('case-state'), 'Referred', { exact: true });
      await waitForText(panel, 'For the Cross-Check Team');
      // A finished case offers no more letter forms.
      await waitForCount(page.getByTestId('open-document-request'), 0);
      await waitForCount(page.getByTestId('open-referral'), 0);
      await panel.scrollIntoViewIfNeeded();
      await screenshot(page, `letters-panel-referred-${name}`);
      // The state badge of a referred case, at the top of the screen (a neutral colour, not alert red).
      await page.getByTestId('case-state').scrollIntoViewIfNeeded();
      await screenshot(page, `case-referred-${name}`);
      expect(errors).toEqual([]);
      await context.close();
    });
  }
});

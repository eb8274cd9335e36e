/**
 * Accessibility in the browser (built web app served by the real server): axe-core runs on
 * every screen at 390×844 and 1280×800 and must find no serious or critical violation and no
 * content outside landmarks (tests/helpers/browser.ts, expectNoSeriousAxeViolations). The
 * keyboard alone signs in and works a case: every control reachable with Tab in reading
 * order and usable with Enter or Space.
 *
 * Source for the bar: WCAG 2.1 level AA (W3C Recommendation, 2018), which public offices
 * must meet; axe-core's rules map to its success criteria (1.4.3 contrast, 4.1.2 name/role/
 * value, 2.5.3 label in name, 1.3.1 and 2.4.1 landmarks, 2.1.1 keyboard).
 */
import type { Browser, Page } from 'playwright-core';
import { createDataSource } from '../../server/db/data-source';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import {
  expectNoSeriousAxeViolations,
  launchBrowser,
  signInThroughUi,
  tabTo,
  VIEWPORTS,
  waitForAttribute,
  waitForCount,
  waitForText,
  WAIT_MS,
} from '../helpers/browser';
import { takeCase } from '../helpers/cases';
import { uniqueAddress } from '../helpers/letter-cases';
import { waitForMail } from '../helpers/maildev';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(300_000);

describe('accessibility: axe-core on every screen, and the keyboard (browser)', () => {
  let s: SeededServer;
  let browser: Browser;
  /** Cases still open, handed out one per test so tests never work the same case. */
  let openCases: string[] = [];

  beforeAll(async () => {
    s = await startSeededServer({ scoredBatch: { seed: 'e2e-a11y', returns: 240, plantShare: 0.12 } });
    browser = await launchBrowser();
    const ds = createDataSource(s.db.url, { poolSize: 1 });
    await ds.initialize();
    try {
      openCases = (await ds.query(`SELECT id FROM exam_case WHERE state = 'open' ORDER BY priority DESC, id LIMIT 8`)).map((r: { id: string }) => r.id);
      // Every other case finished with an invented outcome, by one of the two examiners, over
      // the last ten weeks, so the Programme screen draws its charts and tables with figures.
      await ds.query(
        `UPDATE exam_case c
            SET state = CASE WHEN x.n % 3 = 0 THEN 'closed_adjusted' ELSE 'closed_no_change' END,
                adjusted_amount = CASE WHEN x.n % 3 = 0 THEN 250 + x.n * 17 END,
                outcome = 'Invented outcome for the accessibility test',
                assignee_id = (SELECT id FROM app_user WHERE username = CASE WHEN x.n % 2 = 0 THEN 'examiner' ELSE 'examiner2' END),
                closed_at = now() - make_interval(days => ((x.n % 10) * 7 + 1)::int)
           FROM (SELECT id, row_number() OVER (ORDER BY id) AS n FROM exam_case WHERE NOT (id = ANY($1::uuid[]))) x
          WHERE c.id = x.id`,
        [openCases],
      );
    } finally {
      await ds.destroy();
    }
    expect(openCases.length).toBeGreaterThanOrEqual(6);
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
  });

  const nextCase = () => takeCase(openCases);

  async function signOut(page: Page) {
    await page.getByTestId('sign-out').click();
    await page.waitForURL(/\/sign-in$/, { timeout: WAIT_MS });
  }

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    const wide = name === 'wide';
    const size = `${viewport.width}×${viewport.height}`;

    it(`sign-in, status, about, queue, case, workload, batches, batch, scoring and programme (${name} ${size})`, async () => {
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      const base = s.server.baseUrl;

      await page.goto(base + '/sign-in', { waitUntil: 'networkidle' });
      await page.getByTestId('sign-in-username').waitFor();
      await expectNoSeriousAxeViolations(page, `sign-in ${size}`);
      await page.getByTestId('sign-in-username').fill('supervisor');
      await page.getByTestId('sign-in-password').fill('not-the-password');
      await page.getByTestId('sign-in-submit').click();
      await waitForText(page.getByTestId('sign-in-error'), 'The user name or password is wrong.', { exact: true });
      await expectNoSeriousAxeViolations(page, `sign-in with an error ${size}`);

      await signInThroughUi(page, base, 'supervisor', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/workload', { timeout: WAIT_MS });
      await page.getByTestId('workload-examiner').waitFor();
      await expectNoSeriousAxeViolations(page, `workload ${size}`);
      await page.getByTestId('workload-assign-open').click();
      await page.locator('[data-testid^="pick-"]').first().waitFor();
      await expectNoSeriousAxeViolations(page, `workload with the reassignment panel ${size}`);

      await page.goto(base + '/status', { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('health-database-state'), 'Up', { exact: true });
      await expectNoSeriousAxeViolations(page, `status ${size}`);

      await page.goto(base + '/about', { waitUntil: 'networkidle' });
      await page.getByTestId('cautions').waitFor();
      await expectNoSeriousAxeViolations(page, `about ${size}`);

      await page.goto(base + '/queue?state=all', { waitUntil: 'networkidle' });
      await page
        .locator(`[data-testid^="${wide ? 'queue-row-' : 'queue-card-'}"]`)
        .first()
        .waitFor();
      if (!wide) await page.getByTestId('queue-filters-toggle').click();
      await page.getByTestId('queue-more').click();
      await page.getByTestId('queue-activity').waitFor();
      await expectNoSeriousAxeViolations(page, `queue with every filter shown ${size}`);

      await page.goto(`${base}/cases/${nextCase()}`, { waitUntil: 'networkidle' });
      await page.getByTestId('case-screen').waitFor();
      await page.getByTestId('digit-chart-return').waitFor();
      await expectNoSeriousAxeViolations(page, `case (supervisor) ${size}`);

      await page.goto(base + '/batches', { waitUntil: 'networkidle' });
      await page.getByTestId('batch-list').waitFor();
      await expectNoSeriousAxeViolations(page, `batches ${size}`);

      await page.goto(`${base}/batches/${s.batch!.batchId}`, { waitUntil: 'networkidle' });
      await page.getByTestId('batch-returns').waitFor();
      await expectNoSeriousAxeViolations(page, `batch ${size}`);

      await page.goto(base + '/scoring', { waitUntil: 'networkidle' });
      await page.getByTestId('save-profile').waitFor();
      await expectNoSeriousAxeViolations(page, `scoring ${size}`);

      await page.goto(base + '/programme', { waitUntil: 'networkidle' });
      await waitForText(page.getByTestId('programme-methods'), 'Wilson score interval');
      await page.getByTestId('programme-chart-deciles').waitFor();
      await page.getByTestId('programme-by-examiner').waitFor();
      await expectNoSeriousAxeViolations(page, `programme ${size}`);
      await signOut(page);
      expect(errors).toEqual([]);
      await page.close();
    });

    it(`users and access log (administrator, ${name} ${size})`, async () => {
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'admin', DEMO_PASSWORD);
      await page.getByTestId('user-examiner2').waitFor();
      await expectNoSeriousAxeViolations(page, `users ${size}`);
      // The open editor holds the role choice, the (de)activate button and the password field.
      await page.getByTestId('user-examiner2-edit').click();
      await page.getByTestId('user-examiner2').getByRole('radio').first().waitFor();
      await expectNoSeriousAxeViolations(page, `users with an account open ${size}`);

      await page.goto(s.server.baseUrl + '/access-log', { waitUntil: 'networkidle' });
      await page.getByTestId('log-total').waitFor();
      await page.getByText('signed in').first().waitFor();
      await expectNoSeriousAxeViolations(page, `access log ${size}`);
      expect(errors).toEqual([]);
      await page.close();
    });

    it(`examiner's queue and case, letters form, and the taxpayer's reply page (${name} ${size})`, async () => {
      const context = await browser.newContext({ viewport });
      const page = await context.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/queue', { timeout: WAIT_MS });
      await page.getByTestId('needs-me').waitFor();
      await expectNoSeriousAxeViolations(page, `my cases (examiner) ${size}`);
      // Examiners start on their own cases (issue 14); everyone's, for cases to look at.
      await page.goto(`${s.server.baseUrl}/queue?assignee=any`, { waitUntil: 'networkidle' });
      await page
        .locator(`[data-testid^="${wide ? 'queue-row-' : 'queue-card-'}"]`)
        .first()
        .waitFor();
      await expectNoSeriousAxeViolations(page, `queue (examiner) ${size}`);

      await page.goto(`${s.server.baseUrl}/cases/${nextCase()}`, { waitUntil: 'networkidle' });
      await page.getByTestId('case-claim').click();
      await waitForText(page.getByTestId('case-state'), 'Assigned', { exact: true });
      await page.getByTestId('case-move-in_review').click();
      await waitForText(page.getByTestId('case-state'), 'In review', { exact: true });
      await waitForText(page.getByTestId('letters-panel'), 'No letters yet.');
      await page.getByTestId('factors-quiet-toggle').click();
      await expectNoSeriousAxeViolations(page, `case in review (examiner) ${size}`);

      await page.getByTestId('open-document-request').click();
      await page.getByTestId('request-item-0').fill('Receipts for the vehicle expenses claimed for 2024');
      const to = uniqueAddress('a11y-e2e');
      await page.getByTestId('request-email').fill(to);
      await expectNoSeriousAxeViolations(page, `case with the document request form ${size}`);
      // The letter is read before it is sent (issue 14).
      await page.getByTestId('request-preview-button').click();
      await page.getByTestId('request-preview').waitFor();
      await page.getByTestId('request-send').click();
      await waitForText(page.getByTestId('case-state'), 'Awaiting reply', { exact: true });
      const mail = await waitForMail(to, WAIT_MS);
      await expectNoSeriousAxeViolations(page, `case awaiting a reply ${size}`);

      // The taxpayer's page, in a browser of their own (no session).
      const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec(mail.text ?? '')![1];
      const taxpayer = await browser.newContext({ viewport });
      const tp = await taxpayer.newPage();
      tp.on('pageerror', (e) => errors.push(e.message));
      await tp.goto(`${s.server.baseUrl}/reply/${token}`, { waitUntil: 'networkidle' });
      await tp.getByTestId('reply-request').waitFor();
      await expectNoSeriousAxeViolations(tp, `reply page ${size}`);
      await tp.getByTestId('reply-file-input').setInputFiles([{ name: 'notes.txt', mimeType: 'text/plain', buffer: Buffer.from('hello') }]);
      await tp.getByTestId('reply-problems').waitFor();
      await expectNoSeriousAxeViolations(tp, `reply page with a refused file ${size}`);
      await tp.goto(`${s.server.baseUrl}/reply/${'x'.repeat(43)}`, { waitUntil: 'networkidle' });
      await tp.getByTestId('reply-not-found').waitFor();
      await expectNoSeriousAxeViolations(tp, `reply page, unknown link ${size}`);
      await taxpayer.close();
      expect(errors).toEqual([]);
      await context.close();
    });
  }

  it('signs in with the keyboard alone: user name, password, button in that order; Enter submits', async () => {
    for (const viewport of Object.values(VIEWPORTS)) {
      const page = await browser.newPage({ viewport });
      await page.goto(s.server.baseUrl + '/sign-in', { waitUntil: 'networkidle' });
      await page.getByTestId('sign-in-username').waitFor();
      expect(await tabTo(page, 'sign-in-username')).toEqual(['sign-in-username']);
      await page.keyboard.type('examiner');
      expect(await tabTo(page, 'sign-in-password')).toEqual(['sign-in-password']);
      await page.keyboard.type('not-the-password');
      expect(await tabTo(page, 'sign-in-submit')).toEqual(['sign-in-submit']);
      // Enter on the button: the wrong password is explained.
      await page.keyboard.press('Enter');
      await waitForText(page.getByTestId('sign-in-error'), 'The user name or password is wrong.', { exact: true });
      // Back to the password with Shift+Tab, put the right one, and submit with Enter from the field.
      await page.keyboard.press('Shift+Tab');
      await waitForAttribute(page.locator(':focus'), 'data-testid', 'sign-in-password');
      await page.keyboard.press('ControlOrMeta+A');
      await page.keyboard.type(DEMO_PASSWORD);
      await page.keyboard.press('Enter');
      await page.waitForURL((u) => u.pathname === '/queue', { timeout: WAIT_MS });
      await page.getByRole('heading', { name: 'My cases' }).waitFor();
      // Space on the sign-out button works as a click does.
      await tabTo(page, 'sign-out');
      await page.keyboard.press('Space');
      await page.waitForURL(/\/sign-in$/, { timeout: WAIT_MS });
      await page.close();
    }
  });

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    it(`works a case with the keyboard alone: Tab reaches claim and review in reading order, Enter and Space act (${name})`, async () => {
      const page = await browser.newPage({ viewport });
      await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/queue', { timeout: WAIT_MS });
      // Everyone's cases (examiners start on their own, issue 14, which are none yet here).
      await page.goto(`${s.server.baseUrl}/queue?assignee=any`, { waitUntil: 'networkidle' });

      // From the queue: Tab reaches the first case (after the search, filters and nav), Enter opens it.
      const firstCase = page.locator(`[data-testid^="${name === 'wide' ? 'queue-row-' : 'queue-card-'}"]`).first();
      await firstCase.waitFor();
      const firstId = (await firstCase.getAttribute('data-testid'))!;
      const toQueue = await tabTo(page, firstId);
      expect(toQueue.indexOf('queue-search')).toBeGreaterThanOrEqual(0);
      expect(toQueue.indexOf('queue-search')).toBeLessThan(toQueue.indexOf(firstId));
      await page.keyboard.press('Enter');
      await page.waitForURL(/\/cases\/[0-9a-f-]{36}$/, { timeout: WAIT_MS });
      await page.getByTestId('case-screen').waitFor();

      // An open case of our own choosing, so the claim button is there.
      await page.goto(`${s.server.baseUrl}/cases/${nextCase()}`, { waitUntil: 'networkidle' });
      await page.getByTestId('case-claim').waitFor();
      const path = await tabTo(page, 'case-claim');
      // Reading order: the navigation (menu entries carry test ids nav-<route>), then the case's
      // own header, then its actions.
      const navAt = path.findIndex((p) => p.startsWith('nav-'));
      expect(navAt).toBeGreaterThanOrEqual(0);
      expect(path.indexOf('back-to-queue')).toBeGreaterThan(navAt);
      expect(path.indexOf('case-claim')).toBeGreaterThan(path.indexOf('back-to-queue'));
      await page.keyboard.press('Enter');
      await waitForText(page.getByTestId('case-state'), 'Assigned', { exact: true });

      await page.getByTestId('case-move-in_review').waitFor();
      await tabTo(page, 'case-move-in_review');
      await page.keyboard.press('Space');
      await waitForText(page.getByTestId('case-state'), 'In review', { exact: true });

      // A note, typed and sent without the mouse.
      await tabTo(page, 'note-text', 120);
      await page.keyboard.type(`Keyboard note (${name}).`);
      await tabTo(page, 'note-submit');
      await page.keyboard.press('Enter');
      await waitForCount(page.locator('[data-testid^="note-item-"]', { hasText: `Keyboard note (${name}).` }), 1);
      await page.close();
    });
  }
});

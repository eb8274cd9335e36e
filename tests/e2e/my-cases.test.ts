/**
 * The examiner's start (issue 14) in a real browser against the real server with a scored
 * batch, at 390×844 and 1280×800: the start screen shows only the examiner's own cases with
 * "Needs me" and a taxpayer's reply flagged on its row until the case is opened; a search by
 * taxpayer name finds a finished case, marked finished; a saved view is there again after
 * signing out and in; and the frame (a case page marks the queue, the phone's menu row has a
 * cue while it is cut off, the signed-in name and role show on a phone). Screenshots under
 * tests/e2e/screenshots.
 */
import type { Browser, Page } from 'playwright-core';
import type { DataSource } from 'typeorm';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { createDataSource } from '../../server/db/data-source';
import type { SessionUser } from '../../server/auth/access';
import { assignCase, claimCase, endReplyWait, moveCase } from '../../server/cases/case-workflow';
import { markReplyUnread } from '../../server/cases/case-queue.repository';
import type { CaseState } from '../../shared/cases';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, WAIT_MS, waitForAttribute, waitForCount, waitForText } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(300_000);

describe('my cases, search and saved views (browser)', () => {
  let s: SeededServer;
  let browser: Browser;
  let ds: DataSource;
  let examiner: SessionUser;
  let supervisor: SessionUser;

  beforeAll(async () => {
    s = await startSeededServer({ scoredBatch: { seed: 'e2e-my-cases', returns: 400, plantShare: 0.1 } });
    ds = createDataSource(s.db.url, { poolSize: 2 });
    await ds.initialize();
    const user = async (username: string): Promise<SessionUser> => {
      const [u] = await ds.query(`SELECT id, username, display_name AS "displayName", role FROM app_user WHERE username = $1`, [username]);
      return u;
    };
    examiner = await user('examiner');
    supervisor = await user('supervisor');
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await ds?.destroy();
    await s?.close();
  });

  /** The next open case, taken by the examiner to `state` through the real workflow. */
  async function caseOfMine(state: CaseState): Promise<{ id: string; ref: string; name: string }> {
    const [c] = await ds.query(
      `SELECT c.id, r.return_ref AS ref, t.name FROM exam_case c JOIN tax_return r ON r.id = c.return_id JOIN taxpayer t ON t.id = c.taxpayer_id
        WHERE c.state = 'open' AND c.selection = 'score' ORDER BY c.priority DESC, c.id LIMIT 1`,
    );
    const audit = (route: string) => ({ actor: examiner, route });
    await claimCase(ds, audit(`POST /api/cases/${c.id}/claim`), c.id);
    const steps: Record<string, { to: CaseState; opts?: Parameters<typeof moveCase>[4] }[]> = {
      assigned: [],
      in_review: [{ to: 'in_review' }],
      awaiting_reply: [{ to: 'in_review' }, { to: 'awaiting_reply', opts: { kind: 'document-request', dueDate: '2099-01-31' } }],
      closed_no_change: [{ to: 'in_review' }, { to: 'closed_no_change', opts: { outcome: 'Records matched the return' } }],
    };
    for (const st of steps[state]) await ds.transaction((m) => moveCase(m, audit(`POST /api/cases/${c.id}/transition`), c.id, st.to, st.opts));
    return c;
  }

  /** What the reply link does when a taxpayer sends records (server/letters/replies.service.ts), without the letter. */
  async function replyArrives(caseId: string): Promise<void> {
    await ds.transaction(async (m) => {
      await endReplyWait(m, caseId, 'reply-received', { files: 1 }, true);
      await markReplyUnread(m, caseId);
    });
  }

  const rowPrefix = (wide: boolean) => (wide ? 'queue-row-' : 'queue-card-');
  /** The queue's rows or cards (not the deadline labels inside them, whose ids share the prefix). */
  const rowsSelector = (wide: boolean) => `[data-testid^="${rowPrefix(wide)}"]:not([data-testid*="-deadline-"])`;
  const listedRefs = async (page: Page, wide: boolean) =>
    page.$$eval(rowsSelector(wide), (els, prefix) => els.map((e) => e.getAttribute('data-testid')!.slice(prefix.length)), rowPrefix(wide));

  /** Waits for the queue to have answered for the current address (the previous page may still show). */
  async function queueSettled(page: Page) {
    await page.waitForFunction(() => !document.body.textContent?.includes('Loading the queue…'));
    await page.getByTestId('queue-total').waitFor();
  }

  async function signOut(page: Page) {
    await page.getByTestId('sign-out').click();
    await page.waitForURL(/\/sign-in$/, { timeout: WAIT_MS });
  }

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    const wide = name === 'wide';
    const size = `${viewport.width}×${viewport.height}`;

    it(`examiner: My cases with Needs me and a reply flag; a name search finds a finished case; a saved view comes back (${name} ${size})`, async () => {
      const replied = await caseOfMine('awaiting_reply');
      await replyArrives(replied.id);
      const finished = await caseOfMine('closed_no_change');
      await caseOfMine('in_review');
      // One handed over by the supervisor: counts under "Handed to me".
      const [{ id: givenId }] = await ds.query(`SELECT id FROM exam_case WHERE state = 'open' AND selection = 'score' ORDER BY priority DESC, id LIMIT 1`);
      await assignCase(ds, { actor: supervisor, route: `POST /api/cases/${givenId}/assign` }, givenId, examiner.id);
      const mine: string[] = (
        await ds.query(
          `SELECT r.return_ref AS ref FROM exam_case c JOIN tax_return r ON r.id = c.return_id WHERE c.assignee_id = $1 AND c.state IN ('assigned', 'in_review', 'awaiting_reply')`,
          [examiner.id],
        )
      ).map((r: { ref: string }) => r.ref);
      const everyone: number = (
        await ds.query(`SELECT count(*)::int AS n FROM exam_case WHERE state IN ('open', 'assigned', 'in_review', 'awaiting_reply')`)
      )[0].n;
      expect(everyone).toBeGreaterThan(mine.length);

      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/queue' && u.search === '');
      await page.getByRole('heading', { name: 'My cases' }).waitFor();

      // Only the examiner's own cases being worked, and the reply flagged on its row.
      await waitForText(page.getByTestId('queue-total'), new RegExp(`of ${mine.length} cases? being worked`));
      await waitForCount(page.locator(rowsSelector(wide)), mine.length);
      expect((await listedRefs(page, wide)).sort()).toEqual([...mine].sort());
      await page.getByTestId(`reply-flag-${replied.ref}`).waitFor();
      await waitForText(page.getByTestId('needs-reply-count'), /^[1-9]\d*$/);
      await waitForText(page.getByTestId('needs-handed-count'), /^[1-9]\d*$/);
      // The phone shows who is signed in, in the bar.
      await waitForText(page.getByTestId('signed-in-name'), 'Ivo Brackley', { exact: true });
      await waitForText(page.getByTestId('signed-in-role'), 'Examiner', { exact: true });
      await waitForAttribute(page.getByTestId('nav-queue'), 'aria-current', 'page');
      await screenshot(page, `my-cases-${name}`);

      // "Replies received" narrows to the replied case; opening it clears the flag.
      await page.getByTestId('needs-reply').click();
      await page.waitForURL(/needs=reply/);
      await page.waitForFunction(
        ([rows, ref]) => {
          const listed = Array.from(document.querySelectorAll(rows));
          const flagged = document.querySelectorAll('[data-testid^="reply-flag-"]').length;
          return listed.length === flagged && !!document.querySelector(`[data-testid="reply-flag-${ref}"]`);
        },
        [rowsSelector(wide), replied.ref],
      );
      await page.getByTestId(`${rowPrefix(wide)}${replied.ref}`).click();
      await page.waitForURL(/\/cases\/[0-9a-f-]{36}$/);
      await page.getByTestId('case-screen').waitFor();
      // The case says what is new, on this first opening by its examiner.
      await waitForText(page.getByTestId('case-reply-flag'), 'New reply from the taxpayer');
      // A case page belongs to the queue: the menu marks it.
      await waitForAttribute(page.getByTestId('nav-queue'), 'aria-current', 'page');
      await screenshot(page, `my-cases-case-frame-${name}`);
      await page.goto(s.server.baseUrl + '/queue', { waitUntil: 'networkidle' });
      await page.getByRole('heading', { name: 'My cases' }).waitFor();
      await waitForCount(page.locator(rowsSelector(wide)), mine.length);
      await waitForCount(page.getByTestId(`reply-flag-${replied.ref}`), 0);

      // A search by part of the taxpayer's name finds the finished case, marked finished.
      const surname = finished.name.split(' ').at(-1)!;
      await page.getByTestId('queue-search').fill(surname.toLowerCase());
      await page.getByTestId('queue-search-go').click();
      await page.waitForURL(/q=/);
      await waitForText(page.getByTestId('queue-search-clear'), 'in every state');
      await page.getByTestId(`finished-${finished.ref}`).waitFor();
      await page.getByRole('heading', { name: 'Examination queue' }).waitFor();
      await screenshot(page, `my-cases-search-${name}`);
      await page.getByTestId('queue-search-clear').click();
      await page.getByRole('heading', { name: 'My cases' }).waitFor();

      // A saved view: everyone's cases, deadline soonest, deadlines within a year.
      if (!wide) await page.getByTestId('queue-filters-toggle').click();
      await page.getByTestId('queue-who-any').click();
      await page.waitForURL(/assignee=any/);
      await page.getByTestId('queue-sort-deadline').click();
      await page.waitForURL(/sort=deadline/);
      await page.getByTestId('queue-within-365').click();
      await page.waitForURL(/deadlineWithin=365/);
      await queueSettled(page);
      const viewName = `Year ahead ${name}`;
      await page.getByTestId('saved-view-new').click();
      await page.getByTestId('saved-view-name').fill(viewName);
      await page.getByTestId('saved-view-save').click();
      await waitForAttribute(page.getByTestId(`saved-view-${viewName}`), 'aria-pressed', 'true');
      await screenshot(page, `my-cases-saved-view-${name}`);

      await signOut(page);
      await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/queue' && u.search === '');
      await page.getByRole('heading', { name: 'My cases' }).waitFor();
      await waitForAttribute(page.getByTestId(`saved-view-${viewName}`), 'aria-pressed', 'false');
      await page.getByTestId(`saved-view-${viewName}`).click();
      await page.waitForURL(
        (u) => u.searchParams.get('sort') === 'deadline' && u.searchParams.get('deadlineWithin') === '365' && u.searchParams.get('assignee') === 'any',
      );
      await page.getByRole('heading', { name: 'Examination queue' }).waitFor();
      await waitForAttribute(page.getByTestId(`saved-view-${viewName}`), 'aria-pressed', 'true');
      await queueSettled(page);
      if (!wide) await page.getByTestId('queue-filters-toggle').click();
      await waitForAttribute(page.getByTestId('queue-within-365'), 'aria-checked', 'true');
      await screenshot(page, `my-cases-view-restored-${name}`);

      expect(errors).toEqual([]);
      await page.close();
    });
  }

  it('the phone menu row shows a cue while it is cut off; status lives under About (390×844)', async () => {
    const page = await browser.newPage({ viewport: VIEWPORTS.phone });
    await signInThroughUi(page, s.server.baseUrl, 'supervisor', DEMO_PASSWORD);
    await page.waitForURL((u) => u.pathname === '/workload');
    await page.getByTestId('nav-more-right').waitFor();
    await waitForText(page.getByTestId('signed-in-name'), 'Maud Fennick', { exact: true });
    await screenshot(page, 'frame-phone-supervisor');
    // No status entry in the menu; About leads to it and stays marked there.
    await waitForCount(page.getByTestId('nav-home'), 0);
    await page.goto(s.server.baseUrl + '/about', { waitUntil: 'networkidle' });
    await page.getByTestId('cautions').waitFor();
    await screenshot(page, 'frame-phone-about');
    await page.getByRole('link', { name: /System status/ }).click();
    await page.waitForURL((u) => u.pathname === '/status');
    await waitForText(page.getByTestId('health-database-state'), 'Up', { exact: true });
    await waitForAttribute(page.getByTestId('nav-about'), 'aria-current', 'page');
    // The current entry is scrolled into the phone's row, and the cue now points back.
    await page.getByTestId('nav-more-left').waitFor();
    await page.waitForFunction(() => {
      const about = document.querySelector('[data-testid="nav-about"]')?.getBoundingClientRect();
      return !!about && about.right <= window.innerWidth && about.left >= 0;
    });
    await screenshot(page, 'frame-phone-status');
    await page.close();
  });
});

/**
 * Safe case actions in a real browser (issue 14), at 390×844 and 1280×800: a closing asks
 * first, in a labelled dialog that says the consequence, that Escape closes and that gives
 * the focus back; once confirmed the case offers "Next case" in the order of the queue view
 * it was opened from; a supervisor reopens the finished case with a reason kept in its
 * history. On a phone the actions allowed now sit in the sticky bar at the top.
 * Screenshots go to tests/e2e/screenshots (gitignored).
 */
import type { Browser, Page } from 'playwright-core';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { axeViolations, launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForText } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(300_000);

/** The return references listed on the queue screen, in order (cards on a phone, rows when wide). */
async function listedRefs(page: Page, wide: boolean): Promise<string[]> {
  const prefix = wide ? 'queue-row-' : 'queue-card-';
  await page.locator(`[data-testid^="${prefix}"]`).first().waitFor();
  const ids = await page.locator(`[data-testid^="${prefix}"]`).evaluateAll((els) => els.map((e) => e.getAttribute('data-testid') ?? ''));
  // Parts inside a card or row carry test ids of their own (queue-card-deadline-…): only whole
  // cards and rows, whose id ends in the reference (ALD-2024-000019).
  return ids.map((id) => id.replace(/^queue-(row|card)-/, '')).filter((ref) => /^[A-Z]+-\d{4}-\d+$/.test(ref));
}

/**
 * Signs in through the sign-in screen. Other test runs in this working tree may rebuild the
 * web app's files while this server serves them, so a sign-in screen that never appears is
 * loaded once more before the test gives up.
 */
async function signInAs(page: Page, baseUrl: string, username: string): Promise<void> {
  try {
    await signInThroughUi(page, baseUrl, username, DEMO_PASSWORD);
  } catch {
    await signInThroughUi(page, baseUrl, username, DEMO_PASSWORD);
  }
}

/** The test id of the focused element, or its tag. */
const focused = (page: Page) => page.evaluate(() => document.activeElement?.getAttribute('data-testid') ?? document.activeElement?.tagName ?? 'none');

describe('safe case actions (browser)', () => {
  let s: SeededServer;
  let browser: Browser;
  /** The case each size closed, for the supervisor's reopen. */
  const closed: Record<string, { url: string; ref: string }> = {};

  beforeAll(async () => {
    s = await startSeededServer({ scoredBatch: { seed: 'e2e-case-actions', returns: 400, plantShare: 0.1 } });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
  });

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    const wide = name === 'wide';
    /** On a phone the action is pressed in the sticky bar, when wide in Actions. */
    const act = (page: Page, bar: string, panel: string) => page.getByTestId(wide ? panel : bar).click();

    it(`examiner: a closing asks first, then offers the next case in the queue's order (${name} ${viewport.width}×${viewport.height})`, async () => {
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInAs(page, s.server.baseUrl, 'examiner');
      // The open cases by priority: the queue view the case is opened from.
      await page.goto(`${s.server.baseUrl}/queue?state=open&sort=priority&assignee=any`);
      await page.waitForFunction(
        (prefix) => {
          const first = document.querySelector(`[data-testid^="${prefix}"]`);
          return !!first && /Open/.test(first.textContent ?? '') && !/Assigned|In review|Closed/.test(first.textContent ?? '');
        },
        wide ? 'queue-row-' : 'queue-card-',
      );
      const refs = await listedRefs(page, wide);
      expect(refs.length).toBeGreaterThanOrEqual(3);
      await page.getByTestId(`${wide ? 'queue-row' : 'queue-card'}-${refs[0]}`).click();
      await page.waitForURL(/\/cases\/[0-9a-f-]{36}$/);
      await waitForText(page.getByTestId('case-ref'), refs[0], { exact: true });
      const caseUrl = page.url();
      // Related cases: the taxpayer's other returns and the preparer's other selected returns.
      await waitForText(page.getByTestId('case-related'), "This taxpayer's other returns");

      if (!wide) {
        // The actions allowed now are in the bar at the top, on the first screen.
        const bar = page.getByTestId('case-action-bar');
        await bar.getByTestId('bar-claim').waitFor();
        const box = await bar.boundingBox();
        expect(box!.y + box!.height).toBeLessThan(viewport.height);
        await screenshot(page, `case-actions-bar-${name}`);
        // How far down the page the Actions and Letters start, and how tall the whole page is.
        const layout = await page.evaluate(() => {
          const main = document.querySelector('main')!;
          const top = (id: string) => Math.round(document.getElementById(id)!.getBoundingClientRect().top - main.getBoundingClientRect().top + main.scrollTop);
          return { actions: top('case-part-actions'), letters: top('case-part-letters'), page: main.scrollHeight };
        });
        console.log(`case screen at ${viewport.width}×${viewport.height}: ${JSON.stringify(layout)}`);
      }
      await act(page, 'bar-claim', 'case-claim');
      await waitForText(page.getByTestId('case-state'), 'Assigned', { exact: true });
      await act(page, 'bar-move-in_review', 'case-move-in_review');
      await waitForText(page.getByTestId('case-state'), 'In review', { exact: true });
      if (!wide) {
        // Scrolled far down, the bar is still on screen.
        await page.getByTestId('case-history').scrollIntoViewIfNeeded();
        const box = await page.getByTestId('case-action-bar').boundingBox();
        expect(box!.y).toBeGreaterThanOrEqual(0);
        expect(box!.y).toBeLessThan(viewport.height / 2);
      }

      await act(page, 'bar-move-closed_no_change', 'case-move-closed_no_change');
      await page.getByTestId('close-form').waitFor();
      const outcome = `Records seen (${name}): the receipts match the bank deposits.`;
      await page.getByTestId('close-outcome').fill(outcome);
      // The closing form shows the letter first (close-form.tsx), then offers to close.
      await page.getByTestId('close-preview').click();
      await page.getByTestId('close-letter-preview').waitFor();
      await page.getByTestId('close-submit').click();

      // The dialog: labelled by its question, the consequence in words, nothing done yet.
      const dialog = page.getByRole('dialog', { name: 'Close this case with no change?' });
      await dialog.waitFor();
      await waitForText(
        page.getByTestId('close-confirm-consequence'),
        /finished as closed with no change.*only a supervisor can reopen it\. The taxpayer is sent the no-change letter at once/,
      );
      await waitForText(page.getByTestId('close-confirm-outcome'), outcome, { exact: true });
      // axe-core on the whole page with the dialog open (the letter preview's scrolling text
      // takes focus: components/features/letters/letter-text.tsx).
      expect(await axeViolations(page)).toEqual([]);
      await screenshot(page, `case-close-confirm-${name}`);
      // The keyboard stays inside the dialog.
      for (let i = 0; i < 4; i++) {
        await page.keyboard.press('Tab');
        expect(await page.evaluate(() => !!document.activeElement?.closest('[role="dialog"]'))).toBe(true);
      }
      // Escape closes it, changes nothing, and gives the focus back to the button that opened it.
      await page.keyboard.press('Escape');
      await dialog.waitFor({ state: 'detached' });
      await page.waitForFunction(() => document.activeElement?.getAttribute('data-testid') === 'close-submit');
      await waitForText(page.getByTestId('case-state'), 'In review', { exact: true });

      await page.getByTestId('close-submit').click();
      await dialog.waitFor();
      expect(await focused(page)).not.toBe('close-confirm-confirm');
      await page.getByTestId('close-confirm-confirm').click();
      await dialog.waitFor({ state: 'detached' });
      await waitForText(page.getByTestId('case-state'), 'Closed, no change', { exact: true });
      await waitForText(page.getByTestId('case-next-done'), 'The case is closed, no change.', { exact: true });
      // The next case is the one that followed it in the open-by-priority view.
      await waitForText(page.getByTestId('case-next-which'), new RegExp(`^Next in the queue: ${refs[1]}, `));
      // The notice and its button are brought into view, wherever the closing form was.
      const nextBox = (await page.getByTestId('case-next-open').boundingBox())!;
      expect(nextBox.y).toBeGreaterThanOrEqual(0);
      expect(nextBox.y + nextBox.height).toBeLessThanOrEqual(viewport.height);
      await screenshot(page, `case-closed-next-${name}`);
      closed[name] = { url: caseUrl, ref: refs[0] };

      await page.getByTestId('case-next-open').click();
      await page.waitForURL((u) => u.href !== caseUrl && /\/cases\/[0-9a-f-]{36}$/.test(u.pathname));
      await waitForText(page.getByTestId('case-ref'), refs[1], { exact: true });
      await waitForText(page.getByTestId('case-state'), 'Open', { exact: true });
      expect(errors).toEqual([]);
      await page.close();
    });

    it(`supervisor: reopens the finished case with a reason (${name} ${viewport.width}×${viewport.height})`, async () => {
      const done = closed[name];
      expect(done).toBeDefined();
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInAs(page, s.server.baseUrl, 'supervisor');
      await page.goto(done.url);
      await waitForText(page.getByTestId('case-ref'), done.ref, { exact: true });
      await waitForText(page.getByTestId('case-state'), 'Closed, no change', { exact: true });
      await act(page, 'bar-reopen', 'case-reopen');
      const dialog = page.getByRole('dialog', { name: 'Reopen this finished case?' });
      await dialog.waitFor();
      await waitForText(page.getByTestId('reopen-dialog-consequence'), /goes back in review with Ivo Brackley.*stays in the history with your reason/);
      // No reason, no reopen: the field says so.
      await page.getByTestId('reopen-dialog-confirm').click();
      await page.getByText('Say in a sentence why the case is reopened').waitFor();
      await waitForText(page.getByTestId('case-state'), 'Closed, no change', { exact: true });
      const reason = `The taxpayer sent a corrected statement after the closing (${name}).`;
      await page.getByTestId('reopen-reason').fill(reason);
      await screenshot(page, `case-reopen-dialog-${name}`);
      await page.getByTestId('reopen-dialog-confirm').click();
      await dialog.waitFor({ state: 'detached' });
      await waitForText(page.getByTestId('case-state'), 'In review', { exact: true });
      await waitForText(page.getByTestId('case-history'), `Maud Fennick reopened the case (it was closed, no change); it is back in review. Reason: ${reason}`);
      await screenshot(page, `case-reopened-${name}`);
      expect(errors).toEqual([]);
      await page.close();
    });
  }
});

/**
 * Case work in a real browser against the real server with a scored batch: the examiner's
 * journey (sign in → queue → case → claim → review → note → close) and the supervisor's
 * (workload → give open cases out → reassign → see the history on the case → export), at
 * 390×844 and 1280×800, with screenshots under tests/e2e/screenshots.
 */
import ExcelJS from 'exceljs';
import fs from 'node:fs';
import type { Browser, Page } from 'playwright-core';
import { SCREENING_CAUTION } from '../../shared/cautions';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, screenshot, signInThroughUi, VIEWPORTS, waitForCount, waitForText, waitForValue } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(240_000);

/** The return reference of the first case listed on the queue screen (card or row). */
async function firstListedRef(page: Page, wide: boolean): Promise<string> {
  const first = page.locator(`[data-testid^="${wide ? 'queue-row-' : 'queue-card-'}"]`).first();
  await first.waitFor();
  return (await first.getAttribute('data-testid'))!.replace(/^queue-(row|card)-/, '');
}

/**
 * The app scrolls inside its own ScrollView, so a "full page" screenshot shows one screen.
 * This grows the viewport (same width) to the scrolled content's height, takes the
 * screenshot, and puts the viewport back: the whole screen, as a phone or laptop lays it out.
 */
async function screenshotWhole(page: Page, name: string): Promise<void> {
  const size = page.viewportSize()!;
  const extra = await page.evaluate(() => {
    let most = 0;
    for (const el of Array.from(document.querySelectorAll<HTMLElement>('div, main'))) {
      const oy = getComputedStyle(el).overflowY;
      if ((oy === 'auto' || oy === 'scroll') && el.scrollHeight > el.clientHeight) most = Math.max(most, el.scrollHeight - el.clientHeight);
    }
    return most;
  });
  await page.setViewportSize({ width: size.width, height: Math.min(9000, size.height + extra) });
  // Let the layout settle at the new size: two animation frames, not a fixed pause.
  await page.evaluate(() => new Promise<void>((r) => requestAnimationFrame(() => requestAnimationFrame(() => r()))));
  await screenshot(page, name);
  await page.setViewportSize(size);
}

describe('case work (browser)', () => {
  let s: SeededServer;
  let browser: Browser;

  beforeAll(async () => {
    s = await startSeededServer({ scoredBatch: { seed: 'e2e-cases', returns: 400, plantShare: 0.1 } });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
  });

  for (const [name, viewport] of Object.entries(VIEWPORTS)) {
    const wide = name === 'wide';

    it(`examiner: queue → case → claim → review → note → close (${name} ${viewport.width}×${viewport.height})`, async () => {
      const page = await browser.newPage({ viewport });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/queue');
      // Examiners start on their own cases (issue 14); this walk works from everyone's.
      await page.getByRole('heading', { name: 'My cases' }).waitFor();
      await page.getByTestId('needs-me').waitFor();
      await page.goto(s.server.baseUrl + '/queue?assignee=any', { waitUntil: 'networkidle' });
      await page.getByRole('heading', { name: 'Examination queue' }).waitFor();
      await page.getByTestId(wide ? 'queue-table' : 'queue-cards').waitFor();
      // The short caution, in full, above the queue as on the case screen (docs/design.md#cautions).
      await waitForText(page.getByTestId('screening-caution'), SCREENING_CAUTION);
      await waitForText(page.getByTestId('queue-total'), /^1–\d+ of \d+ cases being worked · by priority$/);
      await screenshot(page, `queue-${name}`);
      await screenshotWhole(page, `queue-whole-${name}`);

      // Only open cases, then the first (highest priority) one.
      if (!wide) await page.getByTestId('queue-filters-toggle').click();
      const answered = page.waitForResponse((r) => r.url().includes('/api/cases?') && r.url().includes('state=open'));
      await page.getByTestId('queue-state-open').click();
      await page.waitForURL(/state=open/);
      // The previous page stays on screen while the filtered one loads: wait for the new one.
      await answered;
      const rowPrefix = wide ? 'queue-row-' : 'queue-card-';
      await page.waitForFunction((prefix) => {
        const first = document.querySelector(`[data-testid^="${prefix}"]`);
        return !!first && /Open/.test(first.textContent ?? '') && !/Assigned|In review|Closed/.test(first.textContent ?? '');
      }, rowPrefix);
      const ref = await firstListedRef(page, wide);
      await page.getByTestId(`${wide ? 'queue-row' : 'queue-card'}-${ref}`).click();
      await page.waitForURL(/\/cases\/[0-9a-f-]{36}$/);
      await page.getByTestId('case-screen').waitFor();
      await waitForText(page.getByTestId('case-ref'), ref, { exact: true });
      await waitForText(page.getByTestId('screening-caution'), SCREENING_CAUTION);
      await waitForText(page.getByTestId('case-tin'), /^TIN ••• ••• \d{3}$/);
      // Each factor that fired shows "+N" points with its evidence; the chart is an SVG with digits 1–9.
      const factors = page.locator('[data-testid^="factor-"]');
      await waitForText(factors.first(), /^\+\d+\.\d/);
      const chart = page.getByTestId('digit-chart-return').locator('svg').first();
      await chart.waitFor();
      for (const d of ['1', '2', '3', '4', '5', '6', '7', '8', '9'])
        await chart
          .locator('text', { hasText: new RegExp(`^${d}$`) })
          .first()
          .waitFor();
      await waitForCount(page.getByTestId('letters-panel'), 1);
      await screenshot(page, `case-${name}`);
      await screenshotWhole(page, `case-whole-${name}`);

      await page.getByTestId('case-claim').click();
      await waitForText(page.getByTestId('case-state'), 'Assigned', { exact: true });
      await page.getByTestId('reveal-tin').click();
      await waitForText(page.getByTestId('case-tin'), /^TIN \d{3} \d{3} \d{3}$/);
      await page.getByTestId('case-move-in_review').click();
      await waitForText(page.getByTestId('case-state'), 'In review', { exact: true });

      const note = `Asked for the ${name} ledger; receipts look rounded.`;
      await page.getByTestId('note-text').fill(note);
      await page.getByTestId('note-submit').click();
      const written = page.locator('[data-testid^="note-item-"]', { hasText: note });
      await waitForText(written, /^Ivo Brackley · \d{4}-\d{2}-\d{2} \d{2}:\d{2}/);
      await waitForValue(page.getByTestId('note-text'), '');

      // Closing adjusted takes corrected figures by line code (issue 13; the whole walk with the
      // letter's preview is tests/e2e/closing-letters.test.ts); the adjusted amount is worked out.
      await page.getByTestId('case-move-closed_adjusted').click();
      await page.getByTestId('close-form').waitFor();
      await page.getByTestId('close-preview').click();
      await page.getByText('Say in a sentence what was found or why the case moves on').waitFor();
      await page.getByTestId('close-outcome').fill('Business receipts understated against bank deposits.');
      await page.getByTestId('close-line-inc.wages').fill('1,250');
      await page.getByText('Give the corrected amount as a number of 0 or more with at most 2 decimals, e.g. 1250.00').first().waitFor();
      // Wages far above any fixture return's income and losses: the tax surely changes.
      await page.getByTestId('close-line-inc.wages').fill('99999999.00');
      await waitForText(page.getByTestId('close-tax-difference'), /^Adjusted amount: \+/);
      await page.getByTestId('close-figures').scrollIntoViewIfNeeded();
      await page.getByTestId('close-preview').click();
      await page
        .getByTestId('close-letter-preview')
        .waitFor()
        .catch(async (e) => {
          await screenshot(page, `debug-close-preview-${name}`);
          throw e;
        });
      await page.getByTestId('close-submit').click();
      await page.getByTestId('close-confirm-confirm').click();
      await waitForText(page.getByTestId('case-state'), 'Closed, adjusted', { exact: true });
      await waitForText(page.getByTestId('case-outcome'), /Adjusted amount [\d,]+\.\d\d/);
      await waitForText(page.getByTestId('case-history'), /Ivo Brackley moved the case from in review to closed, adjusted, adjusted amount \d+\.\d\d/);
      await screenshot(page, `case-closed-${name}`);
      await screenshotWhole(page, `case-closed-whole-${name}`);

      // Back to the queue keeps the filter in the address.
      await page.getByTestId('back-to-queue').click();
      await page.waitForURL((u) => u.pathname === '/queue');
      expect(errors).toEqual([]);
      await page.close();
    });

    it(`supervisor: workload → give open cases out → reassign → history on the case (${name} ${viewport.width}×${viewport.height})`, async () => {
      const page = await browser.newPage({ viewport, acceptDownloads: true });
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(e.message));
      await signInThroughUi(page, s.server.baseUrl, 'supervisor', DEMO_PASSWORD);
      await page.waitForURL((u) => u.pathname === '/workload');
      await page.getByTestId('workload-examiner').waitFor();
      // "Not started" for an examiner: the figure at the end of the cell (on a phone the cell
      // also holds its label). The first read is the baseline; later ones wait for a figure.
      const notStartedCell = (user: string) => page.getByTestId(`workload-${user}-assigned`);
      const notStarted = async (user: string) => Number((await waitForText(notStartedCell(user), /\d+$/)).match(/(\d+)$/)![1]);
      const waitNotStarted = (user: string, n: number) => waitForText(notStartedCell(user), new RegExp(`(^|\\D)${n}$`));
      const ivoBefore = await notStarted('examiner');
      const nellBefore = await notStarted('examiner2');
      await screenshot(page, `workload-${name}`);

      // Give two open cases to Ivo.
      await page.getByTestId('workload-assign-open').click();
      const panel = page.getByTestId('reassign-panel');
      await panel.waitFor();
      const picks = panel.locator('[data-testid^="pick-"]:not([data-testid="pick-all"])');
      await picks.first().waitFor();
      const refs = (await picks.evaluateAll((els) => els.slice(0, 2).map((e) => e.getAttribute('data-testid')!.slice(5)))) as string[];
      for (const r of refs) await panel.getByTestId(`pick-${r}`).click();
      await panel.getByRole('radio', { name: /^Ivo Brackley/ }).click();
      await panel.getByTestId('reassign-submit').click();
      await waitForText(page.getByTestId('reassign-result'), /^2 cases moved\./);
      await waitNotStarted('examiner', ivoBefore + 2);

      // Move one of them on to Nell.
      await page.getByTestId('workload-examiner-reassign').click();
      await panel.getByTestId(`pick-${refs[0]}`).waitFor();
      await panel.getByTestId(`pick-${refs[0]}`).click();
      await panel.getByRole('radio', { name: /^Nell Quarrender/ }).click();
      await waitForText(panel.getByTestId('reassign-submit'), 'Move 1 case to Nell Quarrender', { exact: true });
      await screenshot(page, `reassign-${name}`);
      await screenshotWhole(page, `reassign-whole-${name}`);
      await panel.getByTestId('reassign-submit').click();
      await waitForText(page.getByTestId('reassign-result'), /^1 case moved\./);
      await waitNotStarted('examiner2', nellBefore + 1);

      // The case shows who had it and who has it now.
      await page.goto(`${s.server.baseUrl}/queue?state=all&q=${encodeURIComponent(refs[0])}`, { waitUntil: 'networkidle' });
      await page.getByTestId(`${wide ? 'queue-row' : 'queue-card'}-${refs[0]}`).click();
      await waitForText(page.getByTestId('case-history'), 'Maud Fennick assigned the case to Ivo Brackley');
      await waitForText(page.getByTestId('case-history'), 'Maud Fennick reassigned the case from Ivo Brackley to Nell Quarrender');
      await screenshot(page, `case-reassigned-${name}`);

      if (wide) {
        // Export the queue of Nell's cases; the workbook holds exactly those rows.
        await page.goto(`${s.server.baseUrl}/queue?state=all`, { waitUntil: 'networkidle' });
        await page.getByTestId('queue-table').waitFor();
        const download = page.waitForEvent('download');
        await page.getByTestId('queue-export').click();
        const file = await (await download).path();
        const wb = new ExcelJS.Workbook();
        await wb.xlsx.load(fs.readFileSync(file!) as unknown as ArrayBuffer);
        const total = Number((await waitForText(page.getByTestId('queue-total'), /of [\d,]+ case/)).match(/of ([\d,]+) case/)![1].replace(/,/g, ''));
        expect(wb.getWorksheet('Queue')!.rowCount).toBe(total + 1);
      }
      expect(errors).toEqual([]);
      await page.close();
    });
  }
});

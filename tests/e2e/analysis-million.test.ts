/**
 * A file of 1,000,000 amounts on the Digit analysis screen (issue 15): the upload shows a
 * progress bar whose value grows, the page keeps answering while the file is sent and read
 * (the server reads it, never the page), and the result counts every amount. The upload is
 * throttled to a slow office link (Chromium's network emulation) so that the bar has time to
 * move; the freeze bound is generous: this checks that the page does not lock up, it is not a
 * speed target (those live in `npm run bench:*`).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { mulberry32 } from '../../shared/digits';
import { DEMO_PASSWORD } from '../../server/seed/demo-seed';
import { launchBrowser, signInThroughUi, waitForText } from '../helpers/browser';
import { startSeededServer, type SeededServer } from '../helpers/seeded-server';

jest.setTimeout(900_000);

/** Amounts in the file. */
const N = 1_000_000;
/** Upload speed of the emulated link, bytes a second: a 10 MB file takes a few seconds. */
const UPLOAD_BYTES_PER_S = 3 * 1024 * 1024;
/** Longest the page may go without a frame or an answer: a lock-up, not a slow frame. */
const FREEZE_MS = 2_000;

/** What the page records about itself while the analysis runs (installed before the click). */
interface PageWatch {
  /** Longest gap between two animation frames, ms. */
  longestFrameGap: number;
  /** Every value the progress bar showed, in order (aria-valuenow). */
  progress: number[];
  /** Frames seen. */
  frames: number;
}

describe('Digit analysis of a 1,000,000-amount file (browser)', () => {
  let s: SeededServer;
  let browser: Browser;
  let dir: string;
  beforeAll(async () => {
    s = await startSeededServer();
    browser = await launchBrowser();
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-analysis-million-'));
  });
  afterAll(async () => {
    await browser?.close();
    await s?.close();
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
  });

  it('shows a growing progress bar, keeps the page answering, and counts all 1,000,000 amounts', async () => {
    // Invented amounts, log-uniform over 0.01 .. 10^7 (Benford-like), a tenth negative.
    const rnd = mulberry32(15);
    const lines: string[] = ['amount'];
    for (let i = 0; i < N; i++) {
      const cents = Math.round(10 ** (9 * rnd()));
      lines.push(`${rnd() < 0.1 ? '-' : ''}${Math.floor(cents / 100)}.${String(cents % 100).padStart(2, '0')}`);
    }
    const file = path.join(dir, 'million.csv');
    fs.writeFileSync(file, lines.join('\n') + '\n');
    const bytes = fs.statSync(file).size;

    const page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
    await signInThroughUi(page, s.server.baseUrl, 'examiner', DEMO_PASSWORD);
    await page.goto(s.server.baseUrl + '/analysis', { waitUntil: 'networkidle' });
    const chooser = page.waitForEvent('filechooser');
    await page.getByTestId('analysis-pick').click();
    await (await chooser).setFiles(file);
    await waitForText(page.getByTestId('analysis-file-name'), 'million.csv');
    await page.getByTestId('analysis-column-field').fill('amount');

    // A slow link for the upload only (Chrome DevTools Protocol, Network.emulateNetworkConditions).
    const cdp = await page.context().newCDPSession(page);
    await cdp.send('Network.enable');
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: UPLOAD_BYTES_PER_S });

    // The page watches itself: frame gaps from requestAnimationFrame, and each progress value.
    await page.evaluate(() => {
      const w = { longestFrameGap: 0, progress: [] as number[], frames: 0 };
      (window as unknown as { __watch: typeof w }).__watch = w;
      let last = performance.now();
      const tick = (t: number) => {
        w.longestFrameGap = Math.max(w.longestFrameGap, t - last);
        last = t;
        w.frames++;
        requestAnimationFrame(tick);
      };
      requestAnimationFrame(tick);
      const seen = () => {
        const bar = document.querySelector('[data-testid="analysis-progress"]');
        const v = bar === null ? null : Number(bar.getAttribute('aria-valuenow'));
        if (v !== null && v !== w.progress[w.progress.length - 1]) w.progress.push(v);
      };
      new MutationObserver(seen).observe(document.body, { subtree: true, childList: true, attributes: true, attributeFilter: ['aria-valuenow'] });
    });

    const started = Date.now();
    await page.getByTestId('analysis-run').click();
    const bar = page.getByTestId('analysis-progress');
    await bar.waitFor({ timeout: 120_000 });
    // Web-first: the bar shows some of the file sent, then more of it.
    const first = await page.waitForFunction(
      () => Number(document.querySelector('[data-testid="analysis-progress"]')?.getAttribute('aria-valuenow') ?? 0),
      undefined,
      { timeout: 120_000 },
    );
    const firstValue = Number(await first.jsonValue());
    await page.waitForFunction((v) => Number(document.querySelector('[data-testid="analysis-progress"]')?.getAttribute('aria-valuenow') ?? 0) > v, firstValue, {
      timeout: 120_000,
    });

    // While the file is sent and read, the page answers: round trips into it stay short.
    let longestRoundTrip = 0;
    const result = page.getByTestId('analysis-result');
    while (!(await result.isVisible())) {
      const t0 = Date.now();
      await page.evaluate(() => document.readyState);
      longestRoundTrip = Math.max(longestRoundTrip, Date.now() - t0);
      if (Date.now() - started > 600_000) throw new Error('no result after 10 minutes');
      // A pause between probes: this samples responsiveness, it does not wait out a timing.
      await new Promise((r) => setTimeout(r, 200));
    }
    await waitForText(result, '1,000,000 amounts', { timeout: 120_000 });
    const wall = Date.now() - started;
    await waitForText(page.getByTestId('analysis-firstDigit'), 'n = 1,000,000');
    const watch = await page.evaluate(() => (window as unknown as { __watch: PageWatch }).__watch);

    console.log(
      `1,000,000 amounts (${(bytes / 1024 / 1024).toFixed(1)} MB, upload at ${UPLOAD_BYTES_PER_S / 1024 / 1024} MB/s): ` +
        `${(wall / 1000).toFixed(1)} s from the click to the result; longest gap between frames ${watch.longestFrameGap.toFixed(0)} ms ` +
        `(${watch.frames} frames); longest page round trip ${longestRoundTrip} ms; progress values ${watch.progress.join(', ')}`,
    );
    // The bar grew while the file was sent: its values rise until the upload ends (then it
    // shows no share while the server reads, 0).
    const drop = watch.progress.findIndex((v, i) => i > 0 && v < watch.progress[i - 1]);
    const sending = drop === -1 ? watch.progress : watch.progress.slice(0, drop);
    expect(sending.filter((v) => v > 0).length).toBeGreaterThanOrEqual(2);
    expect(sending.every((v, i) => i === 0 || v > sending[i - 1])).toBe(true);
    expect(watch.longestFrameGap).toBeLessThan(FREEZE_MS);
    expect(longestRoundTrip).toBeLessThan(FREEZE_MS);
    await page.close();
  });
});

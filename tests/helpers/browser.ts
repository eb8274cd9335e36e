/**
 * Headless Chromium from Debian (never a downloaded browser), driven by playwright-core,
 * and the waiting assertions and accessibility check the browser tests share.
 *
 * playwright-core has no `expect`, so tests never read a text once and compare it: the
 * screen may still show its previous state (a spinner, the page before a filter). They
 * wait for what they assert with {@link waitForText}, {@link waitForCount} or
 * {@link waitForValue}, which poll until it holds or the (generous) time runs out.
 */
import fs from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type Locator, type Page } from 'playwright-core';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
export const SCREENSHOT_DIR = path.join(__dirname, '..', 'e2e', 'screenshots');

/** The two sizes every screen is looked at: a phone and a laptop. */
export const VIEWPORTS = { phone: { width: 390, height: 844 }, wide: { width: 1280, height: 800 } } as const;

/** How long one click, fill or wait may take by default: generous, for a busy two-core machine. */
export const ACTION_MS = 60_000;
/** How long a navigation (goto, reload, waitForURL) may take by default. */
export const NAVIGATION_MS = 90_000;

/**
 * Launches Chromium with the flags this workplace needs (no network, no GPU). Every page
 * and context it opens (browser.newPage goes through newContext) gets the generous default
 * timeouts above instead of playwright's 30 s.
 */
export async function launchBrowser(): Promise<Browser> {
  if (!fs.existsSync(CHROMIUM)) throw new Error(`Chromium not found at ${CHROMIUM}: apt-get install -y chromium`);
  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  const newContext = browser.newContext.bind(browser);
  browser.newContext = async (options) => {
    const context = await newContext(options);
    context.setDefaultTimeout(ACTION_MS);
    context.setDefaultNavigationTimeout(NAVIGATION_MS);
    return context;
  };
  return browser;
}

/** Saves a full-page screenshot under tests/e2e/screenshots (gitignored). */
export async function screenshot(page: Page, name: string): Promise<string> {
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const file = path.join(SCREENSHOT_DIR, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** Signs in through the sign-in screen and waits until the app has left it. */
export async function signInThroughUi(page: Page, baseUrl: string, username: string, password: string): Promise<void> {
  await page.goto(baseUrl + '/sign-in', { waitUntil: 'networkidle' });
  await page.getByTestId('sign-in-username').fill(username);
  await page.getByTestId('sign-in-password').fill(password);
  await page.getByTestId('sign-in-submit').click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: NAVIGATION_MS });
}

/** How long a waiting assertion waits by default: long enough for a busy two-core machine. */
export const WAIT_MS = 60_000;

/** Options for the waiting assertions. */
export interface WaitOptions {
  /** Milliseconds before giving up (default {@link WAIT_MS}). */
  timeout?: number;
}

/**
 * Polls `read` until `holds` accepts its value; throws with what was last seen when the time
 * runs out. A read that fails (element not there yet, page navigating) counts as not yet.
 */
async function waitUntil<T>(read: () => Promise<T>, holds: (v: T) => boolean, what: string, timeout: number): Promise<T> {
  const deadline = Date.now() + timeout;
  let last: { value?: T; error?: string } = {};
  for (;;) {
    try {
      const value = await read();
      last = { value };
      if (holds(value)) return value;
    } catch (e) {
      last = { error: e instanceof Error ? e.message.split('\n')[0] : String(e) };
    }
    if (Date.now() >= deadline) {
      const seen = 'error' in last && last.error !== undefined ? `last read failed: ${last.error}` : `last seen: ${JSON.stringify(last.value)}`;
      throw new Error(`Waited ${timeout} ms for ${what}; ${seen}`);
    }
    // A short pause between reads: this polls a condition, it does not wait out a timing.
    await new Promise((r) => setTimeout(r, 100));
  }
}

function matchesText(actual: string, expected: string | RegExp, exact: boolean): boolean {
  if (expected instanceof RegExp) return expected.test(actual);
  return exact ? actual === expected : actual.includes(expected);
}

/** One read of the locator's text for the polls below (a short wait per read; the poll retries). */
function readText(locator: Locator, timeout: number): () => Promise<string> {
  return async () => (await locator.textContent({ timeout: Math.min(timeout, 2_000) })) ?? '';
}

/**
 * Waits until the locator's text content matches: a RegExp is tested, a string must be
 * contained (or equal, with `exact`). Returns the text that matched.
 */
export async function waitForText(locator: Locator, expected: string | RegExp, opts: WaitOptions & { exact?: boolean } = {}): Promise<string> {
  const timeout = opts.timeout ?? WAIT_MS;
  const how = expected instanceof RegExp ? `match ${expected}` : opts.exact ? `be ${JSON.stringify(expected)}` : `contain ${JSON.stringify(expected)}`;
  return waitUntil(readText(locator, timeout), (t) => matchesText(t, expected, !!opts.exact), `the text of ${locator} to ${how}`, timeout);
}

/** Waits until the locator's text no longer contains `text` (e.g. a "Loading…" line has gone). */
export async function waitForNoText(locator: Locator, text: string, opts: WaitOptions = {}): Promise<string> {
  const timeout = opts.timeout ?? WAIT_MS;
  return waitUntil(readText(locator, timeout), (t) => !t.includes(text), `the text of ${locator} to lose ${JSON.stringify(text)}`, timeout);
}

/** Waits until the locator matches exactly `n` elements (0 waits for them to go). */
export async function waitForCount(locator: Locator, n: number, opts: WaitOptions = {}): Promise<number> {
  return waitUntil(
    () => locator.count(),
    (c) => c === n,
    `${locator} to match ${n} element(s)`,
    opts.timeout ?? WAIT_MS,
  );
}

/** Waits until an input's value matches (string: equal; RegExp: tested). */
export async function waitForValue(locator: Locator, expected: string | RegExp, opts: WaitOptions = {}): Promise<string> {
  const timeout = opts.timeout ?? WAIT_MS;
  return waitUntil(
    () => locator.inputValue({ timeout: Math.min(timeout, 2_000) }),
    (v) => matchesText(v, expected, true),
    `the value of ${locator} to be ${String(expected)}`,
    timeout,
  );
}

/** Waits until an attribute of the locator's element has the value given (null: absent). */
export async function waitForAttribute(locator: Locator, name: string, expected: string | null, opts: WaitOptions = {}): Promise<string | null> {
  const timeout = opts.timeout ?? WAIT_MS;
  return waitUntil(
    () => locator.getAttribute(name, { timeout: Math.min(timeout, 2_000) }),
    (v) => v === expected,
    `${name} of ${locator} to be ${JSON.stringify(expected)}`,
    timeout,
  );
}

/** One axe-core finding, as the failure message prints it. */
export interface AxeFinding {
  id: string;
  impact: string | null;
  help: string;
  nodes: { target: string; html: string; summary: string }[];
}

/**
 * Rules that fail a screen whatever impact axe gives them: WCAG 2.1 AA asks for
 * landmarks the content sits in (1.3.1, 2.4.1), and axe files these as "moderate".
 */
const ALWAYS_FAIL = new Set([
  'region',
  'landmark-one-main',
  'landmark-no-duplicate-main',
  'landmark-no-duplicate-banner',
  'landmark-unique',
  'landmark-main-is-top-level',
  'landmark-banner-is-top-level',
]);

let axeScript: string | null = null;
function axeSource(): string {
  axeScript ??= fs.readFileSync(require.resolve('axe-core/axe.min.js'), 'utf8');
  return axeScript;
}

/**
 * Runs axe-core (node_modules/axe-core, injected into the page) on the whole page and
 * returns the serious and critical violations, plus the landmark rules above.
 */
export async function axeViolations(page: Page): Promise<AxeFinding[]> {
  const loaded = await page.evaluate(() => typeof (window as unknown as { axe?: unknown }).axe !== 'undefined');
  // Evaluated through the DevTools protocol: the app's Content-Security-Policy (script-src
  // 'self') refuses the inline <script> that page.addScriptTag would add.
  if (!loaded) await page.evaluate(`${axeSource()}\n;undefined`);
  // Fonts change text metrics (and so what overlaps what); measure the page as people see it.
  await page.evaluate(() => document.fonts.ready.then(() => undefined));
  const found = await page.evaluate(async () => {
    const axe = (
      window as unknown as {
        axe: {
          run(
            ctx: Document,
            opts: object,
          ): Promise<{
            violations: { id: string; impact: string | null; help: string; nodes: { target: unknown[]; html: string; failureSummary?: string }[] }[];
          }>;
        };
      }
    ).axe;
    const r = await axe.run(document, { resultTypes: ['violations'] });
    return r.violations.map((v) => ({
      id: v.id,
      impact: v.impact,
      help: v.help,
      nodes: v.nodes.map((n) => ({
        target: n.target.map(String).join(' > '),
        html: n.html.replace(/\s+/g, ' ').slice(0, 160),
        summary: (n.failureSummary ?? '').replace(/\s+/g, ' ').slice(0, 300),
      })),
    }));
  });
  return found.filter((v) => v.impact === 'serious' || v.impact === 'critical' || ALWAYS_FAIL.has(v.id));
}

/**
 * Fails (with every finding's rule, impact and elements) when axe-core finds a serious or
 * critical violation, or content outside landmarks, on the page as it is now. `label`
 * names the screen and size in the message.
 */
export async function expectNoSeriousAxeViolations(page: Page, label: string): Promise<void> {
  const found = await axeViolations(page);
  if (found.length === 0) return;
  const lines = found.flatMap((v) => [
    `  ${v.id} (${v.impact}): ${v.help}`,
    ...v.nodes.slice(0, 12).map((n) => `      ${n.target}\n        ${n.html}${n.summary ? `\n        ${n.summary}` : ''}`),
    ...(v.nodes.length > 12 ? [`      … and ${v.nodes.length - 12} more`] : []),
  ]);
  throw new Error(`axe-core: ${found.reduce((a, v) => a + v.nodes.length, 0)} serious/critical or landmark finding(s) on ${label}:\n${lines.join('\n')}`);
}

/**
 * Presses Tab until the element with `testId` has the focus, and returns the test ids (or
 * tag names) of everything focused on the way, in order. Fails after `maxTabs` presses.
 */
export async function tabTo(page: Page, testId: string, maxTabs = 80): Promise<string[]> {
  const path: string[] = [];
  for (let i = 0; i < maxTabs; i++) {
    await page.keyboard.press('Tab');
    const here = await page.evaluate(() => {
      const el = document.activeElement as HTMLElement | null;
      if (!el || el === document.body) return 'body';
      return (
        el.getAttribute('data-testid') ??
        `${el.tagName.toLowerCase()}${el.getAttribute('aria-label') ? `[${el.getAttribute('aria-label')}]` : el.textContent ? `:${el.textContent.slice(0, 30)}` : ''}`
      );
    });
    path.push(here);
    if (here === testId) return path;
  }
  throw new Error(`Tab did not reach ${testId} in ${maxTabs} presses; focus went: ${path.join(' → ')}`);
}

/**
 * Headless Chromium from Debian (never a downloaded browser), driven by playwright-core.
 */
import fs from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
export const SCREENSHOT_DIR = path.join(__dirname, '..', 'e2e', 'screenshots');

/** The two sizes every screen is looked at: a phone and a laptop. */
export const VIEWPORTS = { phone: { width: 390, height: 844 }, wide: { width: 1280, height: 800 } } as const;

/** Launches Chromium with the flags this workplace needs (no network, no GPU). */
export async function launchBrowser(): Promise<Browser> {
  if (!fs.existsSync(CHROMIUM)) throw new Error(`Chromium not found at ${CHROMIUM}: apt-get install -y chromium`);
  return chromium.launch({
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
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 20_000 });
}

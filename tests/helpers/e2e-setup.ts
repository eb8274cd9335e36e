/**
 * Browser tests start a server, a database and Chromium, and drive several screens per test:
 * on a busy two-core machine one test can take minutes. Files that need more still call
 * jest.setTimeout themselves.
 */
jest.setTimeout(180_000);

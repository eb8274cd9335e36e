/**
 * The one clock of the server and the worker (issue 13): every decision that depends on the
 * date (due dates, expiry of reply links, assessment deadlines, the workload's "today", the
 * daily pass) asks this module, never `new Date()` directly, so tests move time forward
 * instead of waiting, and the server and worker always agree on what day it is.
 *
 * - `PLUMBLINE_CLOCK_OFFSET`: shifts the clock, read once at start-up; a number of days
 *   ("7", "-2.5") or of milliseconds with the suffix "ms" ("3600000ms"). For demos and for
 *   tests that start a real worker process.
 * - `OFFICE_TIME_ZONE`: the office's IANA time zone (e.g. "Europe/Lisbon"); "today" is the
 *   calendar date there. Default: the time zone of the process.
 * - In-process tests call {@link setClockOffset} / {@link advanceClockDays} / {@link resetClock}.
 */

const DAY_MS = 86_400_000;

/** Reads PLUMBLINE_CLOCK_OFFSET; a value that is not a number stops the process with a clear message. */
function offsetFromEnv(raw: string | undefined): number {
  if (raw === undefined || raw.trim() === '') return 0;
  const t = raw.trim();
  const ms = /^(-?\d+(?:\.\d+)?)ms$/.exec(t);
  if (ms) return Number(ms[1]);
  if (/^-?\d+(\.\d+)?$/.test(t)) return Number(t) * DAY_MS;
  throw new Error(`PLUMBLINE_CLOCK_OFFSET=${JSON.stringify(raw)} is not a number of days (e.g. 7) or milliseconds (e.g. 3600000ms)`);
}

let offsetMs = offsetFromEnv(process.env.PLUMBLINE_CLOCK_OFFSET);

/** The current instant by the office clock. */
export function now(): Date {
  return new Date(Date.now() + offsetMs);
}

/** The office's time zone (IANA name), or undefined for the process's own. */
export function officeTimeZone(): string | undefined {
  const tz = process.env.OFFICE_TIME_ZONE?.trim();
  return tz ? tz : undefined;
}

/** The calendar date of an instant in the office's time zone, as YYYY-MM-DD. */
export function officeDate(at: Date): string {
  const tz = officeTimeZone();
  if (!tz) {
    const p = (n: number) => String(n).padStart(2, '0');
    return `${at.getFullYear()}-${p(at.getMonth() + 1)}-${p(at.getDate())}`;
  }
  // en-CA writes dates as YYYY-MM-DD.
  return new Intl.DateTimeFormat('en-CA', { timeZone: tz, year: 'numeric', month: '2-digit', day: '2-digit' }).format(at);
}

/** Today's date in the office's time zone, as YYYY-MM-DD. */
export function today(): string {
  return officeDate(now());
}

/** The hour of the day (0–23) in the office's time zone, now. */
export function officeHour(at: Date = now()): number {
  const tz = officeTimeZone();
  if (!tz) return at.getHours();
  return Number(new Intl.DateTimeFormat('en-GB', { timeZone: tz, hour: '2-digit', hourCycle: 'h23' }).format(at));
}

/** Tests: sets the clock's offset from the real time, in milliseconds. */
export function setClockOffset(ms: number): void {
  offsetMs = ms;
}

/** Tests: moves the clock forward (or back, with a negative number) by whole or part days. */
export function advanceClockDays(days: number): void {
  offsetMs += days * DAY_MS;
}

/** Tests: back to the offset the environment gave (usually none). */
export function resetClock(): void {
  offsetMs = offsetFromEnv(process.env.PLUMBLINE_CLOCK_OFFSET);
}

/** The clock's current offset in milliseconds (for logs). */
export function clockOffsetMs(): number {
  return offsetMs;
}

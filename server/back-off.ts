/**
 * How long to wait before starting a crashed process again: 1 s, doubling to 30 s, and back to
 * 1 s once a run has lasted a minute. One rule for `npm start`'s supervisor
 * (scripts/lib/supervisor.ts) and the server's own workers (server/cluster.ts), so a crash
 * loop never spins and a rare crash is mended quickly.
 */

/** Back-off settings; the defaults are for `npm start` and the server, tests pass small ones. */
export interface BackOff {
  /** Wait before the first restart. */
  initialDelayMs: number;
  /** Longest wait between restarts. */
  maxDelayMs: number;
  /** A run at least this long counts as healthy: the next crash waits initialDelayMs again. */
  resetAfterMs: number;
}

export const DEFAULT_BACK_OFF: BackOff = { initialDelayMs: 1000, maxDelayMs: 30_000, resetAfterMs: 60_000 };

/**
 * The wait before the next restart and the wait after that.
 * @param delay the wait this restart would get (start with `initialDelayMs`)
 * @param upForMs how long the run that ended lasted
 */
export function nextBackOff(backOff: BackOff, delay: number, upForMs: number): { wait: number; next: number } {
  const wait = upForMs >= backOff.resetAfterMs ? backOff.initialDelayMs : delay;
  return { wait, next: Math.min(wait * 2, backOff.maxDelayMs) };
}

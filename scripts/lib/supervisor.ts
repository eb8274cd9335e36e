/**
 * Keeps a child process running: when it exits without being asked to, it is started again
 * after a back-off (1 s, doubling to 30 s; back to 1 s once a run has lasted a minute), with
 * a log line each time. Used by `npm start` for the server, the worker and MailDev, so one
 * crash takes down neither the rest nor itself for good (issue 12).
 */
import { DEFAULT_BACK_OFF, nextBackOff, type BackOff } from '../../server/back-off';
import { stopProcess, type Managed } from './processes';

export { DEFAULT_BACK_OFF, type BackOff };

/** A supervised child. */
export interface Supervised {
  readonly name: string;
  /** The child running now (or the last one, while a restart waits). */
  current(): Managed;
  /** How many times it has been restarted. */
  restarts(): number;
  /** Resolves once the next run after the current one has started (for tests and tools). */
  nextStart(): Promise<Managed>;
  /** Stops supervising (a pending restart is cancelled) but leaves the child running. */
  hold(): void;
  /** Stops supervising and stops the child; no restart happens after this is called. */
  stop(graceMs?: number): Promise<void>;
}

/** How a child ended, for the log line. */
function ending(code: number | null, signal: NodeJS.Signals | null): string {
  return signal ? `was killed by ${signal}` : `exited with code ${code}`;
}

function seconds(ms: number): string {
  return ms < 10_000 ? `${(ms / 1000).toFixed(1)} s` : `${Math.round(ms / 1000)} s`;
}

/**
 * Starts `start()` now and again after every unrequested exit.
 * @param start starts one run of the child (a fresh process each call)
 */
export function supervise(
  name: string,
  start: () => Managed,
  log: (line: string) => void,
  backOff: BackOff = DEFAULT_BACK_OFF,
  now: () => number = Date.now,
): Supervised {
  let stopping = false;
  let restarts = 0;
  let delay = backOff.initialDelayMs;
  let timer: NodeJS.Timeout | null = null;
  let current: Managed;
  let waiters: ((m: Managed) => void)[] = [];

  const run = () => {
    const startedAt = now();
    const m = start();
    current = m;
    const ready = waiters;
    waiters = [];
    for (const w of ready) w(m);
    m.child.once('exit', (code, signal) => {
      if (stopping) return;
      const upFor = now() - startedAt;
      // A run that lasted long enough was healthy: the back-off starts from the beginning.
      const { wait, next } = nextBackOff(backOff, delay, upFor);
      delay = next;
      log(`${name} ${ending(code, signal)} after ${seconds(upFor)}; restarting in ${seconds(wait)} (restart ${restarts + 1})`);
      timer = setTimeout(() => {
        timer = null;
        if (stopping) return;
        restarts += 1;
        run();
      }, wait);
    });
  };
  run();

  const hold = () => {
    stopping = true;
    if (timer) clearTimeout(timer);
    timer = null;
  };
  return {
    name,
    current: () => current,
    restarts: () => restarts,
    nextStart: () => new Promise<Managed>((resolve) => waiters.push(resolve)),
    hold,
    async stop(graceMs?: number) {
      hold();
      await stopProcess(current, graceMs);
    },
  };
}

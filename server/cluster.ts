/**
 * Several server processes (issue 16; docs/operations.md#several-server-processes): with
 * `WEB_CONCURRENCY` above 1 the server's first process becomes a primary that serves nothing
 * itself. It forks that many workers with node:cluster, all listening on the one port (the
 * primary hands each new connection to the next worker in turn), starts a worker that dies
 * again after a back-off (server/back-off.ts), and passes SIGTERM/SIGINT on to the workers,
 * waiting for them to stop before it exits.
 */
import cluster, { type Worker } from 'node:cluster';
import { DEFAULT_BACK_OFF, nextBackOff, type BackOff } from './back-off';

/** How long workers get to stop after a signal before they are killed: under the 8 s `npm start` gives the server (scripts/lib/processes.ts). */
const STOP_GRACE_MS = 7_000;

/** One slot of the pool: its worker now and its back-off. */
interface Slot {
  index: number;
  worker: Worker | null;
  startedAt: number;
  delay: number;
  timer: NodeJS.Timeout | null;
}

/** The running primary. */
export interface Primary {
  /**
   * Resolves once every worker has listened for the first time; rejects when a worker exits
   * before that (a wrong port, a database that refuses), so a server that cannot start says
   * so instead of restarting workers forever.
   */
  ready: Promise<void>;
  /** Stops restarting, sends `signal` to every worker and resolves once all have exited. */
  stop(signal: NodeJS.Signals): Promise<void>;
}

/**
 * Forks `count` workers running this same entry file (node:cluster starts each with this
 * process's arguments, so `node --import tsx server/main.ts` starts workers the same way).
 * A worker knows it is one by `cluster.isWorker`.
 */
export function startPrimary(count: number, log: (line: string) => void, backOff: BackOff = DEFAULT_BACK_OFF): Primary {
  let stopping = false;
  const slots: Slot[] = Array.from({ length: count }, (_, index) => ({ index, worker: null, startedAt: 0, delay: backOff.initialDelayMs, timer: null }));
  const listened = new Set<number>();
  let isReady = false;
  let markReady: () => void = () => undefined;
  let markFailed: (e: Error) => void = () => undefined;
  const ready = new Promise<void>((resolve, reject) => {
    markReady = () => {
      isReady = true;
      resolve();
    };
    markFailed = reject;
  });

  const fork = (slot: Slot) => {
    slot.startedAt = Date.now(); // process supervision, not business time: the real clock
    const w = cluster.fork({ PLUMBLINE_SERVER_WORKER: String(slot.index + 1) });
    slot.worker = w;
    log(`[server] worker ${slot.index + 1} started (pid ${w.process.pid})`);
    w.once('listening', () => {
      listened.add(slot.index);
      if (listened.size === count) markReady();
    });
    w.once('exit', (code, signal) => {
      slot.worker = null;
      if (stopping) return;
      if (!isReady) {
        markFailed(new Error(`worker ${slot.index + 1} ${signal ? `was killed by ${signal}` : `exited with code ${code}`} before the server was listening`));
        return;
      }
      const upFor = Date.now() - slot.startedAt;
      const { wait, next } = nextBackOff(backOff, slot.delay, upFor);
      slot.delay = next;
      log(
        `[server] worker ${slot.index + 1} (pid ${w.process.pid}) ${signal ? `was killed by ${signal}` : `exited with code ${code}`}; starting it again in ${(wait / 1000).toFixed(1)} s`,
      );
      slot.timer = setTimeout(() => {
        slot.timer = null;
        if (!stopping) fork(slot);
      }, wait);
    });
  };
  for (const slot of slots) fork(slot);

  return {
    ready,
    async stop(signal) {
      stopping = true;
      const running: Promise<unknown>[] = [];
      for (const slot of slots) {
        if (slot.timer) clearTimeout(slot.timer);
        const w = slot.worker;
        if (!w || w.isDead()) continue;
        running.push(
          new Promise<void>((resolve) => {
            const kill = setTimeout(() => w.process.kill('SIGKILL'), STOP_GRACE_MS);
            w.once('exit', () => {
              clearTimeout(kill);
              resolve();
            });
            // The process itself, not Worker.kill(): that first cuts the IPC channel, which a
            // worker takes as an order to exit at once, skipping its clean stop.
            w.process.kill(signal);
          }),
        );
      }
      await Promise.all(running);
    },
  };
}

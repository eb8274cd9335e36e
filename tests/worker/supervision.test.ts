/**
 * The start command's supervisor (scripts/lib/supervisor.ts) with small dummy children:
 * restarts after a crash or a kill -9 with a doubling back-off and a log line, resets the
 * back-off after a healthy run, and restarts nothing once asked to stop.
 */
import { startProcess, type Managed } from '../../scripts/lib/processes';
import { supervise, type Supervised } from '../../scripts/lib/supervisor';

jest.setTimeout(60_000);

const node = process.execPath;
/** A child that exits at once with code 3. */
const crasher = (): Managed => startProcess('crash', node, ['-e', 'process.exit(3)'], { quiet: true });
/** A child that runs until stopped. */
const sleeper = (): Managed => startProcess('sleep', node, ['-e', 'setInterval(() => {}, 1000)'], { quiet: true });

/** Resolves when `test` holds, checking every 20 ms. */
async function until(what: string, test: () => boolean, timeoutMs = 30_000): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!test()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('supervise', () => {
  let sup: Supervised | null = null;
  afterEach(async () => {
    await sup?.stop(2000);
    sup = null;
  });

  it('restarts a crashing child with a doubling back-off up to the cap, logging each exit', async () => {
    const lines: string[] = [];
    sup = supervise('crash', crasher, (l) => lines.push(l), { initialDelayMs: 100, maxDelayMs: 400, resetAfterMs: 60_000 });
    await until('four restarts', () => sup!.restarts() >= 4);
    expect(lines.slice(0, 4).map((l) => l.replace(/after [\d.]+ s/, 'after T'))).toEqual([
      'crash exited with code 3 after T; restarting in 0.1 s (restart 1)',
      'crash exited with code 3 after T; restarting in 0.2 s (restart 2)',
      'crash exited with code 3 after T; restarting in 0.4 s (restart 3)',
      'crash exited with code 3 after T; restarting in 0.4 s (restart 4)',
    ]);
  });

  it('restarts a child killed with SIGKILL, and starts the back-off again after a healthy run', async () => {
    const lines: string[] = [];
    let clock = 0;
    sup = supervise(
      'sleep',
      sleeper,
      (l) => lines.push(l),
      { initialDelayMs: 100, maxDelayMs: 1000, resetAfterMs: 60_000 },
      () => clock,
    );
    const first = sup.current();
    // Two quick deaths: the wait doubles.
    let next = sup.nextStart();
    first.child.kill('SIGKILL');
    const second = await next;
    expect(second.child.pid).not.toBe(first.child.pid);
    next = sup.nextStart();
    second.child.kill('SIGKILL');
    const third = await next;
    expect(lines).toEqual([
      'sleep was killed by SIGKILL after 0.0 s; restarting in 0.1 s (restart 1)',
      'sleep was killed by SIGKILL after 0.0 s; restarting in 0.2 s (restart 2)',
    ]);
    // The third run lasts "a minute" (the supervisor's clock): the next wait is the first one again.
    clock += 61_000;
    next = sup.nextStart();
    third.child.kill('SIGKILL');
    await next;
    expect(lines[2]).toMatch(/killed by SIGKILL after 61 s; restarting in 0\.1 s \(restart 3\)$/);
    expect(sup.restarts()).toBe(3);
  });

  it('stops the child on request and restarts nothing after, also while a restart is pending', async () => {
    const lines: string[] = [];
    sup = supervise('sleep', sleeper, (l) => lines.push(l), { initialDelayMs: 50, maxDelayMs: 50, resetAfterMs: 60_000 });
    const child = sup.current();
    await sup.stop(2000);
    expect(child.child.signalCode).toBe('SIGTERM');
    expect(lines).toEqual([]);
    expect(sup.restarts()).toBe(0);

    // hold(): supervision ends, the child keeps running, and its death is not answered.
    const held = supervise('sleep', sleeper, (l) => lines.push(l), { initialDelayMs: 50, maxDelayMs: 50, resetAfterMs: 60_000 });
    held.hold();
    const heldChild = held.current();
    expect(heldChild.child.exitCode).toBeNull();
    heldChild.child.kill('SIGKILL');
    await heldChild.exited;
    expect(lines).toEqual([]);
    expect(held.restarts()).toBe(0);

    // A crash whose restart waits 10 s: stop() cancels the wait and returns at once.
    const pending = supervise('crash', crasher, (l) => lines.push(l), { initialDelayMs: 10_000, maxDelayMs: 10_000, resetAfterMs: 60_000 });
    await until('the crash to be seen', () => lines.length === 1);
    const t0 = Date.now();
    await pending.stop();
    expect(Date.now() - t0).toBeLessThan(5000);
    expect(pending.restarts()).toBe(0);
  });
});

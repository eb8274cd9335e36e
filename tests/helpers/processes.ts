/**
 * Real server and worker processes for tests that need them (browser tests, worker
 * crash tests). Output is collected so a failing test can show it.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import net from 'node:net';
import path from 'node:path';
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import { createDataSource } from '../../server/db/data-source';
import { createBoss, ensureQueues } from '../../server/queue/queues';
import { createTestDatabase, type TestDatabase } from './test-db';

const root = path.join(__dirname, '..', '..');

/** A running child with its collected output. */
export interface RunningProcess {
  child: ChildProcess;
  output(): string;
  /** Resolves with the exit code once it has exited. */
  exited: Promise<number | null>;
  stop(signal?: NodeJS.Signals): Promise<number | null>;
  kill9(): Promise<void>;
}

/** A free loopback port. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
  });
}

/**
 * Starts `tsx <entry>` with the given environment and waits for a line matching `ready`. The
 * default wait is generous: tsx compiles the whole server or worker at start, which on a busy
 * two-core machine has taken well over a minute.
 */
export async function startTsx(entry: string, env: Record<string, string>, ready: RegExp, timeoutMs = 180_000): Promise<RunningProcess> {
  // `node --import tsx` keeps it one process: the tsx wrapper would put a second node
  // under it, which a SIGKILL of the wrapper leaves running.
  const child = spawn(process.execPath, ['--import', 'tsx', entry], { cwd: root, env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  child.stdout!.on('data', (d) => (out += d.toString()));
  child.stderr!.on('data', (d) => (out += d.toString()));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  await new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`${entry} not ready within ${timeoutMs} ms:\n${out}`)), timeoutMs);
    const onData = () => {
      if (ready.test(out)) {
        clearTimeout(timer);
        resolve();
      }
    };
    child.stdout!.on('data', onData);
    child.stderr!.on('data', onData);
    void exited.then((code) => {
      clearTimeout(timer);
      reject(new Error(`${entry} exited with ${code} before it was ready:\n${out}`));
    });
  });
  return {
    child,
    output: () => out,
    exited,
    async stop(signal = 'SIGTERM') {
      if (child.exitCode === null && child.signalCode === null) child.kill(signal);
      return exited;
    },
    async kill9() {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
      await exited;
    },
  };
}

/** Environment for a server or worker on the given database and the test MailDev. */
export function processEnv(databaseUrl: string, port?: number): Record<string, string> {
  return {
    DATABASE_URL: databaseUrl,
    SMTP_PORT: process.env.PLUMBLINE_TEST_SMTP_PORT ?? '1026',
    NODE_ENV: 'test',
    SESSION_SECRET: 'test-secret-test-secret-test-secret',
    ...(port ? { PORT: String(port) } : {}),
  };
}

/**
 * The real server on a free port (with `env` added to {@link processEnv}'s). The port is free
 * when chosen but not held, so another process (several test runs share this machine) may
 * take it before the server binds it: then a new port is tried.
 */
export async function startServer(databaseUrl: string, env: Record<string, string> = {}): Promise<RunningProcess & { baseUrl: string }> {
  for (let attempt = 1; ; attempt++) {
    const port = await freePort();
    try {
      const p = await startTsx('server/main.ts', { ...processEnv(databaseUrl, port), ...env }, /listening on/);
      return { ...p, baseUrl: `http://127.0.0.1:${port}` };
    } catch (e) {
      if (attempt >= 3 || !String(e).includes('EADDRINUSE')) throw e;
    }
  }
}

/**
 * Polls `fn` until it gives a truthy value and returns it; throws naming `what` after
 * `timeoutMs`. An error thrown by `fn` ends the wait (catch it in `fn` to keep polling).
 */
export async function waitFor<T>(what: string, fn: () => Promise<T | null | undefined | false>, timeoutMs = 120_000, everyMs = 100): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await fn();
    if (v) return v;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

/** A fresh test database with a connection and a started pg-boss client (queues made), for tests that run real workers. */
export interface QueueDatabase {
  db: TestDatabase;
  ds: DataSource;
  boss: PgBoss;
  /** Stops the client, closes the connection and drops the database. */
  close(): Promise<void>;
}

/** Opens a {@link QueueDatabase}. */
export async function openQueueDatabase(): Promise<QueueDatabase> {
  const db = await createTestDatabase();
  const ds = createDataSource(db.url, { poolSize: 3 });
  await ds.initialize();
  const boss = createBoss(db.url, 'server');
  await boss.start();
  await ensureQueues(boss);
  return {
    db,
    ds,
    boss,
    async close() {
      await boss.stop({ graceful: false, wait: true });
      await ds.destroy();
      await db.drop();
    },
  };
}

/**
 * Several server processes (issue 16): two servers on one database share the sign-in throttle
 * (it is kept in PostgreSQL), so six wrong passwords sent to them in turn lock the account and
 * the right password is then refused too; the lock outlives a restart of a server; and one
 * server started with WEB_CONCURRENCY=2 serves through two cluster workers, starts a killed
 * worker again and stops them all on SIGTERM.
 */
import type { DataSource } from 'typeorm';
import { createDataSource } from '../../server/db/data-source';
import { createUser } from '../helpers/auth';
import { freePort, processEnv, startServer, startTsx, waitFor, type RunningProcess } from '../helpers/processes';
import { createTestDatabase, type TestDatabase } from '../helpers/test-db';

jest.setTimeout(1_200_000);

type Server = RunningProcess & { baseUrl: string };

let db: TestDatabase;
let ds: DataSource;
const started: Server[] = [];
let password = '';

async function login(server: Server, username: string, pw: string): Promise<{ status: number; error?: string }> {
  const r = await fetch(`${server.baseUrl}/api/auth/login`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ username, password: pw }),
  });
  const body = (await r.json().catch(() => ({}))) as { error?: string };
  return { status: r.status, error: body.error };
}

async function start(env: Record<string, string> = {}): Promise<Server> {
  const s = await startServer(db.url, env);
  started.push(s);
  return s;
}

/**
 * A cluster start compiles the server three times at once (the primary and two workers under
 * tsx), which on a busy two-core machine has taken over three minutes: a longer wait than
 * startServer's.
 */
const CLUSTER_START_MS = 480_000;

async function startCluster(port: number): Promise<Server> {
  const s = {
    ...(await startTsx('server/main.ts', { ...processEnv(db.url, port), WEB_CONCURRENCY: '2' }, /listening on/, CLUSTER_START_MS)),
    baseUrl: `http://127.0.0.1:${port}`,
  };
  started.push(s);
  return s;
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

/** The pids of the cluster workers that said they were ready, in order. */
function readyWorkers(output: string): { worker: string; pid: number }[] {
  return [...output.matchAll(/\[server worker (\d+)\] ready \(pid (\d+)\)/g)].map((m) => ({ worker: m[1], pid: Number(m[2]) }));
}

beforeAll(async () => {
  db = await createTestDatabase();
  ds = createDataSource(db.url, { poolSize: 2 });
  await ds.initialize();
  ({ password } = await createUser({ dataSource: ds }, 'clerk', 'shared-lock'));
});

afterAll(async () => {
  for (const s of started) await s.stop();
  await ds?.destroy();
  await db?.drop();
});

describe('the sign-in throttle across server processes', () => {
  let a: Server;
  let b: Server;

  it('locks an account after six wrong passwords sent to two servers in turn; the right password is refused at both', async () => {
    [a, b] = await Promise.all([start(), start()]);
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++) statuses.push((await login(i % 2 ? b : a, 'shared-lock', 'wrong-password')).status);
    // 5 failures per account (server/auth/throttle.ts): five reach the password check, the sixth is refused.
    expect(statuses).toEqual([401, 401, 401, 401, 401, 429]);
    for (const s of [a, b]) {
      const right = await login(s, 'shared-lock', password);
      expect(right.status).toBe(429);
      expect(right.error).toMatch(/Too many failed sign-ins for this account/);
    }
  });

  it('keeps the lock when a server process is killed and started again', async () => {
    await a.kill9();
    const again = await start();
    const right = await login(again, 'shared-lock', password);
    expect(right.status).toBe(429);
    expect(right.error).toMatch(/Too many failed sign-ins for this account/);
    // Another account still signs in there: the lock is the account's, not the server's.
    const other = await createUser({ dataSource: ds }, 'clerk', 'after-restart');
    expect((await login(again, 'after-restart', other.password)).status).toBe(200);
  });
});

describe('WEB_CONCURRENCY=2', () => {
  it('serves through two cluster workers, starts a killed worker again, and stops them all on SIGTERM', async () => {
    const server = await startCluster(await freePort());
    expect(server.output()).toMatch(/listening on http:\/\/127\.0\.0\.1:\d+ \(2 processes\)/);
    // Each worker writes its own line through its own pipe: the primary's line can come first.
    await waitFor('both workers ready', async () => readyWorkers(server.output()).length >= 2 || undefined, CLUSTER_START_MS);
    const workers = readyWorkers(server.output());
    expect(workers.map((w) => w.worker).sort()).toEqual(['1', '2']);
    expect(new Set(workers.map((w) => w.pid)).size).toBe(2);
    expect(workers.map((w) => w.pid)).not.toContain(server.child.pid);

    const { password: pw } = await createUser({ dataSource: ds }, 'examiner', 'cluster-user');
    for (let i = 0; i < 6; i++) expect((await login(server, 'cluster-user', pw)).status).toBe(200);
    // The lock made through the two single servers holds here too.
    expect((await login(server, 'shared-lock', password)).status).toBe(429);

    // Kill one worker: the other goes on serving, and the primary starts a new one.
    const victim = workers[0];
    process.kill(victim.pid, 'SIGKILL');
    await waitFor(
      `worker ${victim.worker} restarted`,
      async () => readyWorkers(server.output()).find((w) => w.worker === victim.worker && w.pid !== victim.pid),
      CLUSTER_START_MS,
    );
    expect(server.output()).toMatch(new RegExp(`worker ${victim.worker} \\(pid ${victim.pid}\\) was killed by SIGKILL; starting it again`));
    for (let i = 0; i < 4; i++) expect((await login(server, 'cluster-user', pw)).status).toBe(200);

    const pids = readyWorkers(server.output()).map((w) => w.pid);
    expect(await server.stop('SIGTERM')).toBe(0);
    await waitFor('every worker gone', async () => pids.every((pid) => !alive(pid)), 60_000);
  });
});

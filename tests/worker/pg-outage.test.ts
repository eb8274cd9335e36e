/**
 * PostgreSQL stopped and started again under a running server and worker (issue 16): health
 * answers 503 naming the database while it is down and 200 again within 30 s of its return,
 * neither process needs a restart, and a batch queued for scoring just before the outage is
 * scored exactly once. The cluster is this test's own (a fresh one on a free port), so
 * stopping it disturbs no other test.
 */
import type { DataSource } from 'typeorm';
import { prepareAppDatabase } from '../../scripts/lib/app-database';
import { startCluster, stopCluster, type ClusterSpec } from '../../scripts/lib/pg';
import { createDataSource } from '../../server/db/data-source';
import { createBoss, QUEUES } from '../../server/queue/queues';
import { startPrivateCluster, type PrivateCluster } from '../helpers/private-cluster';
import { processEnv, startServer, startTsx, waitFor, type RunningProcess } from '../helpers/processes';
import { loadGeneratedBatch } from '../helpers/scored-batch';

jest.setTimeout(600_000);

let cluster: PrivateCluster;
let spec: ClusterSpec;
let appUrl: string;
let ownerUrl: string;
let server: RunningProcess & { baseUrl: string };
let worker: RunningProcess;

interface Health {
  status: number;
  body: { checks?: { database?: { ok: boolean; detail: string } } } | null;
}

async function health(): Promise<Health> {
  try {
    const r = await fetch(`${server.baseUrl}/api/health`);
    return { status: r.status, body: (await r.json()) as Health['body'] };
  } catch {
    return { status: 0, body: null }; // the server itself did not answer
  }
}

beforeAll(async () => {
  cluster = await startPrivateCluster('plumbline_outage');
  ({ spec } = cluster);
  ({ appUrl, ownerUrl } = await prepareAppDatabase(spec));
  const env = { SCORING_CHUNK_SIZE: '100', QUEUE_MAINTENANCE_SECONDS: '1' };
  server = await startServer(appUrl, env);
  worker = await startTsx('worker/main.ts', { ...processEnv(appUrl), ...env }, /\[worker\] ready/);
});

afterAll(async () => {
  await worker?.stop();
  await server?.stop();
  cluster?.remove();
});

it('health says 503 with the reason while PostgreSQL is down, 200 again after; a batch queued before the outage is scored exactly once', async () => {
  await waitFor('health 200 before the outage', async () => (await health()).status === 200, 120_000, 250);

  // A batch queued for scoring (as intake does), then the database goes away under it.
  const ds: DataSource = createDataSource(ownerUrl, { poolSize: 2, applicationName: 'outage-test' });
  await ds.initialize();
  const b = await loadGeneratedBatch(ds, { seed: 'pg-outage', returns: 1500, plantShare: 0.05 });
  await ds.destroy();
  const boss = createBoss(ownerUrl, 'server');
  await boss.start();
  // A job a worker held when the database went away is retried once it expires (15 min for
  // a batch, 2 min for a slice in server/queue/queues.ts); short expiries keep the test short,
  // as in tests/worker/supervision-processes.test.ts.
  for (const name of [QUEUES.scoreBatch, QUEUES.scoreChunk]) {
    await boss.updateQueue(name, { name, expireInSeconds: 5, retryLimit: 5, retryDelay: 1 });
  }
  await boss.send(QUEUES.scoreBatch, { batchId: b.batchId });
  await boss.stop({ graceful: false, wait: true });
  stopCluster(spec, () => undefined);

  const down = await waitFor('health 503 while PostgreSQL is down', async () => {
    const h = await health();
    return h.status === 503 ? h : null;
  });
  expect(down.body?.checks?.database?.ok).toBe(false);
  expect(down.body?.checks?.database?.detail).toMatch(/\S/);
  console.log(`while down, health said: ${down.body?.checks?.database?.detail}`);

  await startCluster(spec, () => undefined);
  const t0 = Date.now();
  // The aim: 200 again within 30 s of PostgreSQL's return (the server's pool opens
  // new connections on the next query; nothing waits on a timer).
  let last: Health = { status: 0, body: null };
  await waitFor('health 200 within 30 s of PostgreSQL returning', async () => (last = await health()).status === 200, 30_000, 250).catch(() => undefined);
  expect(last).toMatchObject({ status: 200 });
  console.log(`health 200 again ${((Date.now() - t0) / 1000).toFixed(1)} s after PostgreSQL was back`);

  // Neither process restarted: both are the ones started before the outage.
  // (Each check carries the process's output, so a failure shows why it ended.)
  expect({ exit: server.child.exitCode, out: server.child.exitCode === null ? '' : server.output() }).toEqual({ exit: null, out: '' });
  expect({ exit: worker.child.exitCode, out: worker.child.exitCode === null ? '' : worker.output() }).toEqual({ exit: null, out: '' });

  const check = createDataSource(ownerUrl, { poolSize: 1, applicationName: 'outage-check' });
  await check.initialize();
  try {
    const done = await waitFor(
      'the batch scored after the outage',
      async () => {
        const [s] = await check.query(`SELECT state, scored_count FROM filing_batch WHERE id = $1`, [b.batchId]);
        return s.state === 'scored' ? (s as { scored_count: number }) : null;
      },
      300_000,
      500,
    );
    expect(done.scored_count).toBe(1500);
    const [scores] = await check.query(`SELECT count(*)::int AS n, count(DISTINCT return_id)::int AS d FROM return_score WHERE batch_id = $1`, [b.batchId]);
    expect(scores).toEqual({ n: 1500, d: 1500 });
    const [{ dup }] = await check.query(`SELECT (count(*) - count(DISTINCT return_id))::int AS dup FROM exam_case WHERE batch_id = $1`, [b.batchId]);
    expect(dup).toBe(0);
  } finally {
    await check.destroy();
  }
});

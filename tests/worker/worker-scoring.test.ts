/**
 * The scoring worker as it really runs: separate processes taking pg-boss jobs from the test
 * database. Covers the end-to-end path, a worker killed mid-batch (kill -9) and two workers
 * sharing one batch.
 */
import type { DataSource } from 'typeorm';
import { createDataSource } from '../../server/db/data-source';
import { createBoss, ensureQueues, QUEUES } from '../../server/queue/queues';
import { loadGeneratedBatch } from '../helpers/scored-batch';
import { processEnv, startTsx, type RunningProcess } from '../helpers/processes';
import { createTestDatabase, type TestDatabase } from '../helpers/test-db';
import type PgBoss from 'pg-boss';

jest.setTimeout(180_000);

async function waitFor<T>(what: string, fn: () => Promise<T | null | undefined | false>, timeoutMs = 90_000, everyMs = 200): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await fn();
    if (v) return v;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

describe('scoring worker processes', () => {
  let db: TestDatabase;
  let ds: DataSource;
  let boss: PgBoss;
  const workers: RunningProcess[] = [];

  beforeEach(async () => {
    db = await createTestDatabase();
    ds = createDataSource(db.url, { poolSize: 3 });
    await ds.initialize();
    boss = createBoss(db.url, 'server');
    await boss.start();
    await ensureQueues(boss);
  });
  afterEach(async () => {
    for (const w of workers.splice(0)) await w.kill9();
    await boss.stop({ graceful: false, wait: true });
    await ds.destroy();
    await db.drop();
  });

  const startWorker = async (extra: Record<string, string> = {}) => {
    const w = await startTsx('worker/main.ts', { ...processEnv(db.url), QUEUE_MAINTENANCE_SECONDS: '1', ...extra }, /\[worker\] ready/);
    workers.push(w);
    return w;
  };
  const batchState = async (id: string) => (await ds.query(`SELECT state, scored_count, return_count FROM filing_batch WHERE id = $1`, [id]))[0];
  const scoreCount = async (id: string) =>
    (await ds.query(`SELECT count(*)::int AS n, count(DISTINCT return_id)::int AS d FROM return_score WHERE batch_id = $1`, [id]))[0];

  it('takes a batch job, scores every return once and marks the batch scored with progress', async () => {
    const b = await loadGeneratedBatch(ds, { seed: 'worker-e2e', returns: 300, plantShare: 0.1 });
    await startWorker({ SCORING_CHUNK_SIZE: '100' });
    expect(await boss.send(QUEUES.scoreBatch, { batchId: b.batchId })).toBeTruthy();
    const done = await waitFor('batch scored', async () => {
      const s = await batchState(b.batchId);
      return s.state === 'scored' ? s : null;
    });
    expect(done).toEqual({ state: 'scored', scored_count: 300, return_count: 300 });
    expect(await scoreCount(b.batchId)).toEqual({ n: 300, d: 300 });
    const [{ cases, selected }] = await ds.query(
      // Cases opened by the score (the random review sample, docs/methods.md#programme-outcomes, adds its own).
      `SELECT (SELECT count(*)::int FROM exam_case WHERE batch_id = $1 AND selection = 'score') AS cases,
              (SELECT count(*)::int FROM return_score WHERE batch_id = $1 AND (breakdown->>'selected')::boolean) AS selected`,
      [b.batchId],
    );
    expect(cases).toBe(selected);
  });

  it('survives kill -9 mid-batch: the retried slice scores nothing twice and loses nothing', async () => {
    const b = await loadGeneratedBatch(ds, { seed: 'worker-crash', returns: 2000, plantShare: 0.05 });
    // Short expiry so the slice the dead worker held is retried within seconds.
    await boss.updateQueue(QUEUES.scoreChunk, { name: QUEUES.scoreChunk, expireInSeconds: 4, retryLimit: 5, retryDelay: 1 });
    const first = await startWorker({ SCORING_CHUNK_SIZE: '100' });
    await boss.send(QUEUES.scoreBatch, { batchId: b.batchId });
    const partial = await waitFor(
      'some progress',
      async () => {
        const s = await batchState(b.batchId);
        return s.scored_count > 0 ? s : null;
      },
      60_000,
      20,
    );
    await first.kill9();
    const afterKill = await batchState(b.batchId);
    expect(afterKill.state).toBe('scoring');
    expect(afterKill.scored_count).toBeLessThan(2000);
    expect(partial.scored_count).toBeGreaterThan(0);
    // What was committed before the kill is consistent: progress equals stored scores.
    expect((await scoreCount(b.batchId)).n).toBe(afterKill.scored_count);

    await startWorker({ SCORING_CHUNK_SIZE: '100' });
    const done = await waitFor('batch scored after restart', async () => {
      const s = await batchState(b.batchId);
      return s.state === 'scored' ? s : null;
    });
    expect(done.scored_count).toBe(2000);
    expect(await scoreCount(b.batchId)).toEqual({ n: 2000, d: 2000 });
    const [{ dupCases }] = await ds.query(`SELECT count(*) - count(DISTINCT return_id) AS "dupCases" FROM exam_case`);
    expect(Number(dupCases)).toBe(0);
    const [{ n: opened }] = await ds.query(`SELECT count(*)::int AS n FROM case_event WHERE kind = 'opened'`);
    const [{ n: cases }] = await ds.query(`SELECT count(*)::int AS n FROM exam_case`);
    expect(opened).toBe(cases);
  });

  it('two workers split one batch and score each return exactly once', async () => {
    const b = await loadGeneratedBatch(ds, { seed: 'worker-two', returns: 2400, plantShare: 0.05 });
    const a = await startWorker({ SCORING_CHUNK_SIZE: '100' });
    const c = await startWorker({ SCORING_CHUNK_SIZE: '100' });
    await boss.send(QUEUES.scoreBatch, { batchId: b.batchId });
    await waitFor('batch scored', async () => (await batchState(b.batchId)).state === 'scored');
    expect(await scoreCount(b.batchId)).toEqual({ n: 2400, d: 2400 });
    // Each worker logs the returns it scored per slice; together they add up to the batch.
    const scoredBy = (w: RunningProcess) => [...w.output().matchAll(/scored (\d+)/g)].reduce((s, m) => s + Number(m[1]), 0);
    const byA = scoredBy(a);
    const byC = scoredBy(c);
    expect(byA + byC).toBe(2400);
    expect(byA).toBeGreaterThan(0);
    expect(byC).toBeGreaterThan(0);
  });
});

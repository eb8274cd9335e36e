/**
 * Registers every job handler. Handlers reuse server services; each is idempotent, so a job
 * retried after a crash or an expiry does no harm.
 */
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import type { Config } from '../server/config';
import { QUEUES } from '../server/queue/queues';
import { scoreChunk, startScoringRun, type ChunkJob } from '../server/scoring/scoring.service';

/** What a job handler may use. */
export interface WorkerDeps {
  boss: PgBoss;
  dataSource: DataSource;
  config: Config;
  log?: (m: string) => void;
}

/** Wires handlers to queues. */
export async function registerJobs(deps: WorkerDeps): Promise<void> {
  const log = deps.log ?? ((m: string) => console.log(`[worker] ${m}`));
  // batchSize 1: each job completes or fails on its own (pg-boss 10 handlers get arrays).
  await deps.boss.work<{ batchId: string; profileVersion?: number }>(QUEUES.scoreBatch, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
    const { runId, chunks } = await startScoringRun(deps.dataSource, deps.boss, job.data.batchId, job.data.profileVersion);
    log(`batch ${job.data.batchId}: run ${runId}, ${chunks} slice${chunks === 1 ? '' : 's'} queued`);
  });
  let chunkWorker = '';
  chunkWorker = await deps.boss.work<ChunkJob>(QUEUES.scoreChunk, { batchSize: 1, pollingIntervalSeconds: 0.5 }, async ([job]) => {
    const t0 = Date.now();
    const r = await scoreChunk(deps.dataSource, job.data);
    if (!r.skipped) log(`run ${job.data.runId}: scored ${r.scored}${r.failed ? `, ${r.failed} could not be scored` : ''} in ${Date.now() - t0} ms`);
    // pg-boss waits out the rest of its polling interval after every job; a batch has more
    // slices waiting, so ask for the next one at once (an empty fetch then waits as usual).
    if (chunkWorker) deps.boss.notifyWorker(chunkWorker);
  });
}

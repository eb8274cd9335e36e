/**
 * `npm run bench:scoring [-- --returns 25000 --lines 1000000 --json]`
 *
 * Scoring throughput: generates an Aldermere batch of about 25,000 returns and 1,000,000
 * line items, loads it through the intake service (timed, for comparison), then scores it
 * with real worker processes taking pg-boss jobs: once with one worker (the active profile),
 * once with two workers (a copy of the active profile as the next version, so the same
 * returns are scored again from scratch). Prints returns per second for each and the ratio;
 * with `--json` the last line is one JSON object with the figures.
 * A benchmark: it prints, it does not fail.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { ingestUpload } from '../server/batches/batch.service';
import { createBoss, ensureQueues, QUEUES } from '../server/queue/queues';
import { findActiveProfile, insertProfile, lockProfiles, nextProfileVersion } from '../server/scoring/scoring-profile.repository';
import { writeCsvBatch } from '../server/seed/batch-files';
import { DEFAULT_INTAKE_LIMITS } from '../shared/returns/batch-rows';
import { freshBenchDb, releaseBenchCluster } from './lib/bench-db';
import { projectRoot } from './lib/local-services';

function arg(name: string, dflt: number): number {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : dflt;
}
const secs = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

function startWorker(url: string): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'worker/main.ts'], {
    cwd: projectRoot,
    env: { ...process.env, DATABASE_URL: url, NODE_ENV: 'production' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  return new Promise((resolve, reject) => {
    let out = '';
    const onData = (d: Buffer) => {
      out += d.toString();
      if (out.includes('[worker] ready')) resolve(child);
    };
    child.stdout!.on('data', onData);
    child.stderr!.on('data', onData);
    child.on('exit', (code) => reject(new Error(`worker exited (${code}) before it was ready:\n${out}`)));
  });
}

async function main() {
  const returns = arg('returns', 25_000);
  const lines = arg('lines', 1_000_000);
  const dir = path.join(projectRoot, 'bench-output', `scoring-${returns}-${lines}`);
  const itemisation = Math.max(0.2, (lines / returns - 4.85) / 19.75); // as bench-ingest: ~24.6 lines a return at 1
  const opts = { seed: 'bench-scoring', returns, plantShare: 0.05, itemisation, refPrefix: 'SCO' };
  const stamp = path.join(dir, 'params.json');
  let w: { files: Record<string, string | undefined>; counts: { returns: number; lineItems: number } };
  if (fs.existsSync(stamp) && fs.readFileSync(stamp, 'utf8') === JSON.stringify(opts)) {
    w = {
      files: { returns: path.join(dir, 'returns.csv'), line_items: path.join(dir, 'line_items.csv'), statements: path.join(dir, 'statements.csv') },
      counts: JSON.parse(fs.readFileSync(path.join(dir, 'counts.json'), 'utf8')),
    };
  } else {
    w = await writeCsvBatch(dir, opts);
    fs.writeFileSync(path.join(dir, 'counts.json'), JSON.stringify(w.counts));
    fs.writeFileSync(stamp, JSON.stringify(opts));
  }
  console.log(`bench  | batch: ${w.counts.returns.toLocaleString('en-GB')} returns, ${w.counts.lineItems.toLocaleString('en-GB')} line items`);

  const db = await freshBenchDb('plumbline_bench_scoring');
  const part = (t: 'returns' | 'line_items' | 'statements') => ({ originalName: `${t}.csv`, path: w.files[t]!, size: fs.statSync(w.files[t]!).size });
  const warn = console.warn;
  console.warn = () => undefined;
  const t0 = performance.now();
  const out = await ingestUpload(
    { dataSource: db.ds, boss: null, limits: DEFAULT_INTAKE_LIMITS },
    { format: 'csv', parts: { returns: part('returns'), line_items: part('line_items'), statements: part('statements') } },
    { id: db.clerkId },
  );
  const ingestMs = performance.now() - t0;
  console.warn = warn;
  if (out.kind !== 'accepted') throw new Error('the generated batch was not accepted');
  const batchId = out.batch.id;
  console.log(`bench  | ingest through the intake service: ${secs(ingestMs)}`);

  const boss = createBoss(db.url, 'server');
  await boss.start();
  await ensureQueues(boss);
  // The active profile (what an office scores with), and an inactive copy of it as the next
  // version for the second run.
  const { version: active, settings } = await findActiveProfile(db.ds);
  const copy = await db.ds.transaction(async (m) => {
    await lockProfiles(m);
    const version = await nextProfileVersion(m);
    await insertProfile(m, { version, settings, note: 'bench copy', authorId: db.clerkId, active: false });
    return version;
  });

  const timeRun = async (version: number, workers: number) => {
    const procs: ChildProcess[] = [];
    for (let i = 0; i < workers; i++) procs.push(await startWorker(db.url));
    const started = performance.now();
    await boss.send(QUEUES.scoreBatch, { batchId, profileVersion: version });
    for (;;) {
      const r = await db.ds.query(`SELECT finished_at, scored, failed, total FROM scoring_run WHERE batch_id = $1 AND profile_version = $2`, [
        batchId,
        version,
      ]);
      if (r.length && r[0].finished_at) break;
      await new Promise((res) => setTimeout(res, 100));
    }
    const ms = performance.now() - started;
    for (const p of procs) p.kill('SIGTERM');
    await Promise.all(procs.map((p) => new Promise((res) => (p.exitCode !== null ? res(null) : p.on('exit', res)))));
    return ms;
  };
  const one = await timeRun(active, 1);
  const two = await timeRun(copy, 2);
  const [{ n }] = await db.ds.query(`SELECT count(*)::int AS n FROM return_score WHERE batch_id = $1`, [batchId]);
  console.log('');
  console.log(`Scoring ${returns.toLocaleString('en-GB')} returns / ${w.counts.lineItems.toLocaleString('en-GB')} line items (return_score rows: ${n})`);
  console.log(`  ingest (for comparison)  ${secs(ingestMs)}`);
  console.log(`  one worker               ${secs(one)}  ${Math.round(returns / (one / 1000)).toLocaleString('en-GB')} returns/s`);
  console.log(`  two workers              ${secs(two)}  ${Math.round(returns / (two / 1000)).toLocaleString('en-GB')} returns/s`);
  console.log(`  two / one                ${(one / two).toFixed(2)}×   scoring / ingest (one worker) ${(one / ingestMs).toFixed(2)}`);
  console.log(`  profile                  version ${active} (two workers: its copy, version ${copy})`);
  if (process.argv.includes('--json')) {
    const s3 = (ms: number) => Math.round(ms) / 1000;
    console.log(
      JSON.stringify({
        returns: w.counts.returns,
        lineItems: w.counts.lineItems,
        profileVersion: active,
        ingestSeconds: s3(ingestMs),
        oneWorkerSeconds: s3(one),
        twoWorkerSeconds: s3(two),
        twoOverOne: Math.round((one / two) * 100) / 100,
      }),
    );
  }
  await boss.stop({ graceful: false, wait: true });
  await db.close();
  releaseBenchCluster();
}

main().catch((e) => {
  console.error(e);
  releaseBenchCluster();
  process.exit(1);
});

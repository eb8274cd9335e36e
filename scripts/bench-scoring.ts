/**
 * `npm run bench:scoring [-- --returns 25000 --lines 1000000 --json]`
 *
 * Scoring throughput: generates an Aldermere batch of about 25,000 returns and 1,000,000
 * line items, loads it through the intake service (timed, for comparison), then scores it
 * with real worker processes taking pg-boss jobs: once with one worker (the active profile),
 * once with two workers (a copy of the active profile as the next version, so the same
 * returns are scored again from scratch). Prints returns per second for each and the ratio;
 * with `--json` the last line is one JSON object with the figures.
 * `--sizes 100k,1M,4M` (k = thousand, M = million line items, at 40 line items a return)
 * scores each size in turn on a fresh database with one worker, and the largest with two as
 * well; it prints seconds per million line items for scoring and for the ingest at each size,
 * and the largest size's per-million scoring time over the smallest's (issue 16's aim: within
 * ×1.3). The JSON then has `sizes` keyed by the number of line items asked for; its top-level
 * figures are the largest size's.
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
import { optionText, parseSizes } from './lib/sizes';

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

/** Writes (or reuses, when the options match) the generated CSV batch of a size. */
async function batchFiles(returns: number, lines: number) {
  const dir = path.join(projectRoot, 'bench-output', `scoring-${returns}-${lines}`);
  const itemisation = Math.max(0.2, (lines / returns - 4.85) / 19.75); // as bench-ingest: ~24.6 lines a return at 1
  const opts = { seed: 'bench-scoring', returns, plantShare: 0.05, itemisation, refPrefix: 'SCO' };
  const stamp = path.join(dir, 'params.json');
  if (fs.existsSync(stamp) && fs.readFileSync(stamp, 'utf8') === JSON.stringify(opts)) {
    return {
      files: { returns: path.join(dir, 'returns.csv'), line_items: path.join(dir, 'line_items.csv'), statements: path.join(dir, 'statements.csv') } as Record<
        string,
        string | undefined
      >,
      counts: JSON.parse(fs.readFileSync(path.join(dir, 'counts.json'), 'utf8')) as { returns: number; lineItems: number },
    };
  }
  const w = await writeCsvBatch(dir, opts);
  fs.writeFileSync(path.join(dir, 'counts.json'), JSON.stringify(w.counts));
  fs.writeFileSync(stamp, JSON.stringify(opts));
  return w;
}

/** One size's figures (two workers only where asked). */
interface SizeResult {
  label: string;
  returns: number;
  lineItems: number;
  profileVersion: number;
  ingestMs: number;
  oneMs: number;
  twoMs: number | null;
}

/** A fresh database: the batch through the intake service (timed), then scored by one worker and, if asked, by two. */
async function measureSize(label: string, returns: number, lines: number, withTwo: boolean): Promise<SizeResult> {
  const w = await batchFiles(returns, lines);
  console.log(`bench  | size ${label}: ${w.counts.returns.toLocaleString('en-GB')} returns, ${w.counts.lineItems.toLocaleString('en-GB')} line items`);
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
      const r = await db.ds.query(`SELECT finished_at FROM scoring_run WHERE batch_id = $1 AND profile_version = $2`, [batchId, version]);
      if (r.length && r[0].finished_at) break;
      await new Promise((res) => setTimeout(res, 100));
    }
    const ms = performance.now() - started;
    for (const p of procs) p.kill('SIGTERM');
    await Promise.all(procs.map((p) => new Promise((res) => (p.exitCode !== null ? res(null) : p.on('exit', res)))));
    console.log(`bench  | ${workers === 1 ? 'one worker' : 'two workers'}: ${secs(ms)}`);
    return ms;
  };
  const oneMs = await timeRun(active, 1);
  const twoMs = withTwo ? await timeRun(copy, 2) : null;
  await boss.stop({ graceful: false, wait: true });
  await db.close();
  return { label, returns: w.counts.returns, lineItems: w.counts.lineItems, profileVersion: active, ingestMs, oneMs, twoMs };
}

async function main() {
  const sizesText = optionText('sizes');
  const sizes = sizesText === undefined ? null : parseSizes(sizesText, 'sizes');
  const plan = sizes
    ? sizes.map((x) => ({ label: x.label, lines: x.n, returns: Math.max(1, Math.round(x.n / 40)) }))
    : [{ label: String(arg('lines', 1_000_000)), lines: arg('lines', 1_000_000), returns: arg('returns', 25_000) }];
  const measured: SizeResult[] = [];
  for (let i = 0; i < plan.length; i++) measured.push(await measureSize(plan[i].label, plan[i].returns, plan[i].lines, i === plan.length - 1));

  const perMillion = (ms: number, r: SizeResult) => ms / 1000 / (r.lineItems / 1_000_000);
  const report: string[] = [''];
  for (const r of measured) {
    report.push(
      `Scoring ${r.returns.toLocaleString('en-GB')} returns / ${r.lineItems.toLocaleString('en-GB')} line items (profile version ${r.profileVersion})`,
      `  ingest (for comparison)  ${secs(r.ingestMs)}  (${perMillion(r.ingestMs, r).toFixed(2)} s per million line items)`,
      `  one worker               ${secs(r.oneMs)}  ${Math.round(r.returns / (r.oneMs / 1000)).toLocaleString('en-GB')} returns/s  (${perMillion(r.oneMs, r).toFixed(2)} s per million line items)`,
      ...(r.twoMs === null
        ? []
        : [
            `  two workers              ${secs(r.twoMs)}  ${Math.round(r.returns / (r.twoMs / 1000)).toLocaleString('en-GB')} returns/s`,
            `  two / one                ${(r.oneMs / r.twoMs).toFixed(2)}×   scoring / ingest (one worker) ${(r.oneMs / r.ingestMs).toFixed(2)}`,
          ]),
      '',
    );
  }
  const first = measured[0];
  const last = measured[measured.length - 1];
  if (measured.length > 1) {
    report.push(
      `  scoring seconds per million line items by size: ${measured.map((r) => `${r.label} ${perMillion(r.oneMs, r).toFixed(2)}`).join(' · ')}`,
      `  per million at the largest size over the smallest: ×${(perMillion(last.oneMs, last) / perMillion(first.oneMs, first)).toFixed(2)} (aim ≤ ×1.3)`,
      '',
    );
  }
  console.log(report.join('\n'));
  if (process.argv.includes('--json')) {
    const s3 = (ms: number) => Math.round(ms) / 1000;
    const r3 = (x: number) => Math.round(x * 1000) / 1000;
    console.log(
      JSON.stringify({
        returns: last.returns,
        lineItems: last.lineItems,
        profileVersion: last.profileVersion,
        ingestSeconds: s3(last.ingestMs),
        oneWorkerSeconds: s3(last.oneMs),
        twoWorkerSeconds: last.twoMs === null ? null : s3(last.twoMs),
        twoOverOne: last.twoMs === null ? null : Math.round((last.oneMs / last.twoMs) * 100) / 100,
        ...(sizes
          ? {
              sizes: Object.fromEntries(
                measured.map((r, i) => [
                  String(plan[i].lines),
                  { lineItems: r.lineItems, scoringSecondsPerMillion: r3(perMillion(r.oneMs, r)), ingestSecondsPerMillion: r3(perMillion(r.ingestMs, r)) },
                ]),
              ),
              perMillionLargestOverSmallest: Math.round((perMillion(last.oneMs, last) / perMillion(first.oneMs, first)) * 100) / 100,
            }
          : {}),
      }),
    );
  }
  releaseBenchCluster();
}

main().catch((e) => {
  console.error(e);
  releaseBenchCluster();
  process.exit(1);
});

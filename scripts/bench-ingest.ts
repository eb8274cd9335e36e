/**
 * `npm run bench:ingest [-- --returns 25000 --lines 1000000 --runs 2 --xlsx-lines 100000 --sizes 100k,1M,4M --json]`
 *
 * Generates an Aldermere batch of about 25,000 returns and 1,000,000 line items as CSV,
 * loads it through the intake service exactly as `POST /api/batches` does (file checks,
 * SHA-256, csv-parse, zod validation of every row, one transaction, COPY into the indexed
 * tables, totals), and in the same run loads the same three files with plain COPY into
 * unindexed tables. Prints both times, the ratio and the peak memory of the ingest, and the
 * CPU time each side used (this process with its reading thread; PostgreSQL's processes), a
 * steadier figure than the clock on a shared machine. With `--json` the last line is one JSON
 * object with the figures.
 *
 * `--sizes 100k,1M,4M` (k = thousand, M = million line items) measures each size in turn
 * instead, at the default batch's 40 line items a return, and prints seconds per million line
 * items for the ingest and for plain COPY at each size; the JSON then has `sizes`, keyed by
 * the number of line items asked for, and its top-level figures are those of the largest size.
 *
 * Runs on the start command's PostgreSQL (127.0.0.1:54329, or PLUMBLINE_PG_PORT) in a throw-away database
 * `plumbline_bench`; starts the cluster if needed and stops it again only if it started it.
 * A benchmark, not a test: it measures and prints, it does not fail on a slow machine.
 */
import 'reflect-metadata';
import fs from 'node:fs';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import { Client } from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import { createDataSource } from '../server/db/data-source';
import { ingestUpload } from '../server/batches/batch.service';
import { csvTables, type BatchUpload } from '../server/batches/intake/sources';
import { writeCsvBatch, writeXlsxBatch } from '../server/seed/batch-files';
import { User } from '../server/users/user.entity';
import { DEFAULT_INTAKE_LIMITS } from '../shared/returns/batch-rows';
import { prepareAppDatabase } from './lib/app-database';
import { projectRoot, startSetup } from './lib/local-services';
import { optionText, parseSizes } from './lib/sizes';
import { clusterStatus, connectionString, type ClusterSpec, findPgBin, isReady, recreateDatabase, startCluster, stopCluster } from './lib/pg';

const DB = 'plumbline_bench';

function arg(name: string, dflt: number): number {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : dflt;
}

/** Line items a return in the default batch (25,000 returns, 1,000,000 line items). */
const LINES_PER_RETURN = 40;

/**
 * CPU time used so far by the cluster's running processes (postmaster, backends, WAL writer,
 * checkpointer…), in ms, read from Linux's /proc (proc(5): utime and stime, fields 14 and 15,
 * in clock ticks of 1/100 s); null where there is no /proc. A process that has ended is no
 * longer counted, so read it before closing the connections whose work it measures.
 */
function clusterCpuMs(dataDir: string): number | null {
  try {
    const postmaster = Number(fs.readFileSync(path.join(dataDir, 'postmaster.pid'), 'utf8').split('\n')[0]);
    let ticks = 0;
    for (const pid of fs.readdirSync('/proc')) {
      if (!/^\d+$/.test(pid)) continue;
      let stat: string;
      try {
        stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
      } catch {
        continue; // ended meanwhile
      }
      // The command name (field 2) is in parentheses and may hold spaces: split after it.
      const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
      // f[0] is field 3 (state), so field n is f[n - 3].
      if (Number(pid) === postmaster || Number(f[1]) === postmaster) ticks += Number(f[11]) + Number(f[12]);
    }
    return ticks * 10;
  } catch {
    return null;
  }
}

const mb = (b: number) => `${(b / 1024 / 1024).toFixed(0)} MB`;
const secs = (ms: number) => `${(ms / 1000).toFixed(2)} s`;

/** Samples this process's memory while `fn` runs; reports the peak above the start. */
async function withPeakRss<T>(fn: () => Promise<T>): Promise<{ value: T; ms: number; cpuMs: number; startRss: number; peakRss: number; peakHeap: number }> {
  global.gc?.();
  const startRss = process.memoryUsage().rss;
  let peakRss = startRss;
  let peakHeap = 0;
  const timer = setInterval(() => {
    const m = process.memoryUsage();
    peakRss = Math.max(peakRss, m.rss);
    peakHeap = Math.max(peakHeap, m.heapUsed);
  }, 20);
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  try {
    const value = await fn();
    const ms = performance.now() - t0;
    const c = process.cpuUsage(c0);
    const cpuMs = (c.user + c.system) / 1000;
    const m = process.memoryUsage();
    peakRss = Math.max(peakRss, m.rss);
    return { value, ms, cpuMs, startRss, peakRss, peakHeap };
  } finally {
    clearInterval(timer);
  }
}

async function plainCopy(
  url: string,
  files: Record<'returns' | 'line_items' | 'statements', string>,
  dataDir: string,
): Promise<{ ms: number; pgCpuMs: number | null }> {
  const c = new Client({ connectionString: url });
  await c.connect();
  try {
    await c.query(`DROP TABLE IF EXISTS plain_returns, plain_line_items, plain_statements`);
    await c.query(
      `CREATE TABLE plain_returns (return_ref text, tin text, tax_year int, taxpayer_name text, activity_code text, preparer_id text, email text, postal_address text, filed_on text)`,
    );
    await c.query(`CREATE TABLE plain_line_items (return_ref text, line_code text, amount numeric(14,2))`);
    await c.query(`CREATE TABLE plain_statements (tin text, tax_year int, kind text, payer text, amount numeric(14,2))`);
    const cpu0 = clusterCpuMs(dataDir);
    const t0 = performance.now();
    await c.query('BEGIN');
    for (const [table, file] of [
      ['plain_returns', files.returns],
      ['plain_line_items', files.line_items],
      ['plain_statements', files.statements],
    ] as const) {
      await pipeline(fs.createReadStream(file, { highWaterMark: 1 << 20 }), c.query(copyFrom(`COPY ${table} FROM STDIN (FORMAT csv, HEADER true)`)));
    }
    await c.query('COMMIT');
    const ms = performance.now() - t0;
    const cpu1 = clusterCpuMs(dataDir);
    return { ms, pgCpuMs: cpu0 === null || cpu1 === null ? null : cpu1 - cpu0 };
  } finally {
    await c.end();
  }
}

/** One measured run: plain COPY, then the ingest, on a fresh database. */
interface Run {
  copyMs: number;
  ingestMs: number;
  /** CPU of this process (main thread and the reading thread) during the ingest. */
  ingestCpuMs: number;
  /** CPU of PostgreSQL's processes during the plain COPY and during the ingest; null without /proc. */
  copyPgCpuMs: number | null;
  ingestPgCpuMs: number | null;
  peakRss: number;
  startRss: number;
  peakHeap: number;
}

/** What was measured at one size. */
interface SizeResult {
  counts: { returns: number; lineItems: number; statements: number };
  totalBytes: number;
  runs: Run[];
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const medianOrNull = (xs: (number | null)[]) => (xs.some((x) => x === null) ? null : median(xs as number[]));
const round3 = (x: number) => Math.round(x) / 1000;
const cpuText = (ms: number | null) => (ms === null ? 'n/a' : secs(ms));

/** Generator options for a batch of about `lines` line items over `returns` returns. */
function batchOptions(returns: number, lines: number) {
  const itemisation = Math.max(0.2, (lines / returns - 4.85) / 19.75); // fitted: ~24.6 lines a return at 1, ~48.3 at 2.2
  return { seed: 'bench-ingest', returns, plantShare: 0.05, itemisation, refPrefix: 'BEN' };
}

/** A fresh, migrated database for each measurement (other features' tables refuse TRUNCATE). */
async function freshDatabase(spec: ClusterSpec, url: string) {
  await recreateDatabase(spec, DB);
  await prepareAppDatabase(spec, DB);
  // As the superuser, who may CHECKPOINT between the measurements.
  const ds = createDataSource(url, { poolSize: 4, applicationName: 'plumbline-bench' });
  await ds.initialize();
  const user = await ds.getRepository(User).save({ username: 'bench-clerk', displayName: 'Bench clerk', role: 'clerk' as const, active: true });
  return { ds, user };
}

/** Generates (or finds) the batch of one size and measures plain COPY and the ingest `runs` times. */
async function measureSize(spec: ClusterSpec, returns: number, lines: number, runs: number, beforeRuns: () => Promise<void>): Promise<SizeResult> {
  // Generated once per parameters and kept in bench-output/.
  const dir = path.join(projectRoot, 'bench-output', `ingest-${returns}-${lines}`);
  const opts = batchOptions(returns, lines);
  const stamp = path.join(dir, 'params.json');
  let counts: SizeResult['counts'];
  const cached = fs.existsSync(stamp) ? (JSON.parse(fs.readFileSync(stamp, 'utf8')) as { opts: unknown; counts: typeof counts }) : null;
  if (cached && JSON.stringify(cached.opts) === JSON.stringify(opts)) {
    counts = cached.counts;
    console.log(`bench  | using the batch generated before in ${path.relative(projectRoot, dir)}`);
  } else {
    const t0 = performance.now();
    const w = await writeCsvBatch(dir, opts);
    counts = w.counts;
    fs.writeFileSync(stamp, JSON.stringify({ opts, counts }));
    console.log(`bench  | generated in ${secs(performance.now() - t0)}`);
  }
  const files = { returns: path.join(dir, 'returns.csv'), line_items: path.join(dir, 'line_items.csv'), statements: path.join(dir, 'statements.csv') };
  const size = (f: string) => fs.statSync(f).size;
  const totalBytes = size(files.returns) + size(files.line_items) + size(files.statements);
  console.log(
    `bench  | batch: ${counts.returns.toLocaleString('en-GB')} returns, ${counts.lineItems.toLocaleString('en-GB')} line items, ${counts.statements.toLocaleString('en-GB')} statements; CSV ${mb(totalBytes)}`,
  );

  const url = connectionString(spec, DB);
  const upload: BatchUpload = {
    format: 'csv',
    parts: {
      returns: { originalName: 'returns.csv', path: files.returns, size: size(files.returns) },
      line_items: { originalName: 'line_items.csv', path: files.line_items, size: size(files.line_items) },
      statements: { originalName: 'statements.csv', path: files.statements, size: size(files.statements) },
    },
  };
  // Warm the page cache so neither side pays for the first disk read.
  for (const f of Object.values(files)) for await (const _ of fs.createReadStream(f, { highWaterMark: 1 << 20 })) void _;
  await beforeRuns();

  const results: Run[] = [];
  const warn = console.warn;
  console.warn = () => undefined; // the "no queue client" note would print once per run
  try {
    for (let run = 1; run <= runs; run++) {
      const { ds, user } = await freshDatabase(spec, url);
      await ds.query(`CHECKPOINT`);
      const copy = await plainCopy(url, files, spec.dataDir);
      await ds.query(`CHECKPOINT`);
      const phases: string[] = [];
      let lastCpu = clusterCpuMs(spec.dataDir);
      let lastOwn = process.cpuUsage();
      const trace = (phase: string, ms: number) => {
        // A phase in parentheses lies inside the next one: its CPU is counted there.
        if (phase.startsWith('(')) return void phases.push(`${phase} ${secs(ms)}`);
        const cpu = clusterCpuMs(spec.dataDir);
        const own = process.cpuUsage(lastOwn);
        lastOwn = process.cpuUsage();
        const pg = cpu === null || lastCpu === null ? '' : `, PostgreSQL ${secs(cpu - lastCpu)}`;
        phases.push(`${phase} ${secs(ms)} [CPU: this process ${secs((own.user + own.system) / 1000)}${pg}]`);
        lastCpu = cpu;
      };
      const pg0 = clusterCpuMs(spec.dataDir);
      const r = await withPeakRss(() => ingestUpload({ dataSource: ds, boss: null, limits: DEFAULT_INTAKE_LIMITS, trace }, upload, { id: user.id }));
      const pg1 = clusterCpuMs(spec.dataDir);
      if (r.value.kind !== 'accepted') throw new Error(`the bench batch was not accepted: ${JSON.stringify(r.value).slice(0, 2000)}`);
      const stored = (
        await ds.query(
          `SELECT (SELECT count(*) FROM tax_return)::int AS r, (SELECT count(*) FROM line_item)::int AS l, (SELECT count(*) FROM third_party_statement)::int AS s`,
        )
      )[0];
      if (stored.r !== counts.returns || stored.l !== counts.lineItems || stored.s !== counts.statements)
        throw new Error(`stored counts differ: ${JSON.stringify(stored)}`);
      const ingestPgCpuMs = pg0 === null || pg1 === null ? null : pg1 - pg0;
      results.push({
        copyMs: copy.ms,
        ingestMs: r.ms,
        ingestCpuMs: r.cpuMs,
        copyPgCpuMs: copy.pgCpuMs,
        ingestPgCpuMs,
        peakRss: r.peakRss,
        startRss: r.startRss,
        peakHeap: r.peakHeap,
      });
      await ds.destroy();
      console.log(
        `bench  | run ${run}: plain COPY ${secs(copy.ms)} (PostgreSQL CPU ${cpuText(copy.pgCpuMs)}), ingest ${secs(r.ms)} (×${(r.ms / copy.ms).toFixed(2)}; CPU: this process ${secs(r.cpuMs)}, PostgreSQL ${cpuText(ingestPgCpuMs)}), peak RSS ${mb(r.peakRss)} (start ${mb(r.startRss)}), peak heap ${mb(r.peakHeap)}`,
      );
      console.log(`bench  |   phases: ${phases.join(' · ')}`);
    }
  } finally {
    console.warn = warn;
  }
  return { counts, totalBytes, runs: results };
}

/** Medians of one size's runs. */
function summary(s: SizeResult) {
  const copyMs = median(s.runs.map((r) => r.copyMs));
  const ingestMs = median(s.runs.map((r) => r.ingestMs));
  const perMillion = (ms: number) => ms / 1000 / (s.counts.lineItems / 1_000_000);
  const ingestCpuMs = median(s.runs.map((r) => r.ingestCpuMs));
  const ingestPgCpuMs = medianOrNull(s.runs.map((r) => r.ingestPgCpuMs));
  const copyPgCpuMs = medianOrNull(s.runs.map((r) => r.copyPgCpuMs));
  return {
    copyMs,
    ingestMs,
    ratio: ingestMs / copyMs,
    ingestSecondsPerMillion: perMillion(ingestMs),
    copySecondsPerMillion: perMillion(copyMs),
    ingestCpuMs,
    ingestPgCpuMs,
    copyPgCpuMs,
    /** All CPU the ingest took (both sides) over all CPU plain COPY took (PostgreSQL's). */
    cpuRatio: ingestPgCpuMs === null || !copyPgCpuMs ? null : (ingestCpuMs + ingestPgCpuMs) / copyPgCpuMs,
  };
}

/**
 * Starts the reading thread and loads its CSV reader once, as any upload after the server's
 * first leaves it: the thread is kept between uploads (server/batches/intake/upload-worker.ts),
 * so its start is a cost of the server's first upload, not of each batch.
 * @returns how long the start took
 */
async function warmReader(file: string): Promise<number> {
  const t0 = performance.now();
  for await (const t of csvTables({ returns: { originalName: 'warm-up.csv', path: file, size: fs.statSync(file).size } })) for await (const _ of t.rows) void _;
  return performance.now() - t0;
}

async function main() {
  const returnsArg = arg('returns', 25_000);
  const linesArg = arg('lines', 1_000_000);
  const runs = Math.max(1, arg('runs', 2));
  const xlsxLines = arg('xlsx-lines', 0);
  const sizesText = optionText('sizes');
  const sizes = sizesText === undefined ? null : parseSizes(sizesText, 'sizes');
  const spec = { ...startSetup.cluster };
  const bin = findPgBin();
  const wasRunning = bin ? isReady(bin, spec) : false;
  await startCluster(spec, (m) => console.log(`bench  | ${m}`));
  console.log(`bench  | PostgreSQL ${clusterStatus(spec)}`);

  const plan = sizes
    ? sizes.map((s) => ({ label: s.label, lines: s.n, returns: Math.max(1, Math.round(s.n / LINES_PER_RETURN)) }))
    : [{ label: String(linesArg), lines: linesArg, returns: returnsArg }];
  const measured: { label: string; lines: number; result: SizeResult }[] = [];
  let warmMs: number | null = null;
  for (const p of plan) {
    console.log(`bench  | size ${p.label}: ${p.returns.toLocaleString('en-GB')} returns, about ${p.lines.toLocaleString('en-GB')} line items`);
    const dir = path.join(projectRoot, 'bench-output', `ingest-${p.returns}-${p.lines}`);
    const result = await measureSize(spec, p.returns, p.lines, runs, async () => {
      if (warmMs === null) warmMs = await warmReader(path.join(dir, 'returns.csv'));
    });
    measured.push({ label: p.label, lines: p.lines, result });
  }

  let xlsxLine = '';
  if (xlsxLines > 0) {
    const opts = batchOptions(returnsArg, linesArg);
    const xReturns = Math.round(returnsArg * (xlsxLines / linesArg));
    const xfile = path.join(projectRoot, 'bench-output', `ingest-${xReturns}-${xlsxLines}.xlsx`);
    if (!fs.existsSync(xfile)) await writeXlsxBatch(xfile, { ...opts, returns: xReturns, refPrefix: 'BX' });
    const { ds, user } = await freshDatabase(spec, connectionString(spec, DB));
    const x = await withPeakRss(() =>
      ingestUpload(
        { dataSource: ds, boss: null, limits: DEFAULT_INTAKE_LIMITS },
        { format: 'xlsx', workbook: { originalName: path.basename(xfile), path: xfile, size: fs.statSync(xfile).size } },
        { id: user.id },
      ),
    );
    if (x.value.kind !== 'accepted') throw new Error(`the XLSX bench batch was not accepted: ${JSON.stringify(x.value).slice(0, 2000)}`);
    const c = x.value.batch.counts;
    await ds.destroy();
    xlsxLine = `XLSX path (exceljs streaming reader): ${c.returns.toLocaleString('en-GB')} returns, ${c.lineItems.toLocaleString('en-GB')} line items, ${mb(fs.statSync(xfile).size)} workbook: ${secs(x.ms)} (${Math.round(c.lineItems / (x.ms / 1000)).toLocaleString('en-GB')} line items/s), peak RSS ${mb(x.peakRss)}`;
  }
  const admin = new Client({ connectionString: connectionString(spec, 'postgres') });
  await admin.connect();
  await admin.query(`DROP DATABASE IF EXISTS ${DB}`);
  await admin.end();
  if (!wasRunning) stopCluster(spec, (m) => console.log(`bench  | ${m}`));

  const report: string[] = [''];
  for (const m of measured) {
    const { counts, totalBytes, runs: results } = m.result;
    const s = summary(m.result);
    const best = results.reduce((a, b) => (b.ingestMs / b.copyMs < a.ingestMs / a.copyMs ? b : a));
    report.push(
      `  bench:ingest  ${counts.returns.toLocaleString('en-GB')} returns, ${counts.lineItems.toLocaleString('en-GB')} line items, ${counts.statements.toLocaleString('en-GB')} statements (CSV, ${mb(totalBytes)})`,
      `  plain COPY into unindexed tables   ${secs(s.copyMs)}  (median of ${runs}; ${s.copySecondsPerMillion.toFixed(2)} s per million line items; PostgreSQL CPU ${cpuText(s.copyPgCpuMs)})`,
      `  ingest through the API code path   ${secs(s.ingestMs)}  (median of ${runs}; ${s.ingestSecondsPerMillion.toFixed(2)} s per million line items, ${Math.round(counts.lineItems / (s.ingestMs / 1000)).toLocaleString('en-GB')} line items/s; CPU: this process ${secs(s.ingestCpuMs)}, PostgreSQL ${cpuText(s.ingestPgCpuMs)})`,
      `  ratio ingest / COPY                ×${s.ratio.toFixed(2)}  (best run ×${(best.ingestMs / best.copyMs).toFixed(2)}; aim ≤ ×3; CPU of both sides over COPY's ×${s.cpuRatio === null ? 'n/a' : s.cpuRatio.toFixed(2)})`,
      `  peak RSS during ingest             ${mb(Math.max(...results.map((r) => r.peakRss)))}  (${mb(Math.max(...results.map((r) => r.peakRss - r.startRss)))} above the process before the ingest; CSV files ${mb(totalBytes)})`,
      '',
    );
  }
  if (warmMs !== null) report.push(`  reading thread started before the runs in ${secs(warmMs)} (a server pays this once, at its first upload)`);
  if (measured.length > 1) {
    const per = measured.map((m) => summary(m.result));
    report.push(
      `  seconds per million line items by size: ${measured.map((m, i) => `${m.label} ingest ${per[i].ingestSecondsPerMillion.toFixed(2)} / COPY ${per[i].copySecondsPerMillion.toFixed(2)}`).join(' · ')}`,
      `  ingest per million at the largest size over the smallest: ×${(per[per.length - 1].ingestSecondsPerMillion / per[0].ingestSecondsPerMillion).toFixed(2)} (aim ≤ ×1.3)`,
    );
  }
  if (xlsxLine) report.push(`  ${xlsxLine}`);
  console.log([...report, ''].join('\n'));

  if (process.argv.includes('--json')) {
    const last = measured[measured.length - 1];
    const s = summary(last.result);
    const results = last.result.runs;
    console.log(
      JSON.stringify({
        returns: last.result.counts.returns,
        lineItems: last.result.counts.lineItems,
        runs,
        copySeconds: round3(s.copyMs),
        ingestSeconds: round3(s.ingestMs),
        ratio: Math.round(s.ratio * 100) / 100,
        ingestCpuSeconds: round3(s.ingestCpuMs),
        ingestPgCpuSeconds: s.ingestPgCpuMs === null ? null : round3(s.ingestPgCpuMs),
        copyPgCpuSeconds: s.copyPgCpuMs === null ? null : round3(s.copyPgCpuMs),
        cpuRatio: s.cpuRatio === null ? null : Math.round(s.cpuRatio * 100) / 100,
        peakRssMb: Math.round(Math.max(...results.map((r) => r.peakRss)) / 1024 / 1024),
        ...(sizes
          ? {
              sizes: Object.fromEntries(
                measured.map((m) => {
                  const x = summary(m.result);
                  return [
                    String(m.lines),
                    {
                      lineItems: m.result.counts.lineItems,
                      ingestSecondsPerMillion: Math.round(x.ingestSecondsPerMillion * 1000) / 1000,
                      copySecondsPerMillion: Math.round(x.copySecondsPerMillion * 1000) / 1000,
                      ratio: Math.round(x.ratio * 100) / 100,
                    },
                  ];
                }),
              ),
            }
          : {}),
      }),
    );
  }
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(`bench:ingest failed: ${e instanceof Error ? e.stack : String(e)}`);
    process.exit(1);
  },
);

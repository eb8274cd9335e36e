/**
 * `npm run bench:ingest [-- --returns 25000 --lines 1000000 --runs 2 --xlsx-lines 100000 --json]`
 *
 * Generates an Aldermere batch of about 25,000 returns and 1,000,000 line items as CSV,
 * loads it through the intake service exactly as `POST /api/batches` does (file checks,
 * SHA-256, csv-parse, zod validation of every row, one transaction, COPY into the indexed
 * tables, totals), and in the same run loads the same three files with plain COPY into
 * unindexed tables. Prints both times, the ratio and the peak memory of the ingest; with
 * `--json` the last line is one JSON object with the figures.
 *
 * Runs on the start command's PostgreSQL (127.0.0.1:54329) in a throw-away database
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
import type { BatchUpload } from '../server/batches/intake/sources';
import { writeCsvBatch, writeXlsxBatch } from '../server/seed/batch-files';
import { User } from '../server/users/user.entity';
import { DEFAULT_INTAKE_LIMITS } from '../shared/returns/batch-rows';
import { prepareAppDatabase } from './lib/app-database';
import { projectRoot, startSetup } from './lib/local-services';
import { clusterStatus, connectionString, findPgBin, isReady, recreateDatabase, startCluster, stopCluster } from './lib/pg';

const DB = 'plumbline_bench';

function arg(name: string, dflt: number): number {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : dflt;
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

async function plainCopy(url: string, files: Record<'returns' | 'line_items' | 'statements', string>): Promise<number> {
  const c = new Client({ connectionString: url });
  await c.connect();
  try {
    await c.query(`DROP TABLE IF EXISTS plain_returns, plain_line_items, plain_statements`);
    await c.query(
      `CREATE TABLE plain_returns (return_ref text, tin text, tax_year int, taxpayer_name text, activity_code text, preparer_id text, email text, postal_address text, filed_on text)`,
    );
    await c.query(`CREATE TABLE plain_line_items (return_ref text, line_code text, amount numeric(14,2))`);
    await c.query(`CREATE TABLE plain_statements (tin text, tax_year int, kind text, payer text, amount numeric(14,2))`);
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
    return performance.now() - t0;
  } finally {
    await c.end();
  }
}

async function main() {
  const returns = arg('returns', 25_000);
  const lines = arg('lines', 1_000_000);
  const runs = Math.max(1, arg('runs', 2));
  const xlsxLines = arg('xlsx-lines', 0);
  const spec = { ...startSetup.cluster };
  const bin = findPgBin();
  const wasRunning = bin ? isReady(bin, spec) : false;
  await startCluster(spec, (m) => console.log(`bench  | ${m}`));
  console.log(`bench  | PostgreSQL ${clusterStatus(spec)}`);

  // Generate (cached by parameters). itemisation is set so the batch has ~`lines` line items.
  const dir = path.join(projectRoot, 'bench-output', `ingest-${returns}-${lines}`);
  const itemisation = Math.max(0.2, (lines / returns - 4.85) / 19.75); // fitted: ~24.6 lines a return at 1, ~48.3 at 2.2
  const opts = { seed: 'bench-ingest', returns, plantShare: 0.05, itemisation, refPrefix: 'BEN' };
  const stamp = path.join(dir, 'params.json');
  let counts: { returns: number; lineItems: number; statements: number };
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
  /** A fresh, migrated database for each measurement (other features' tables refuse TRUNCATE). */
  const freshDatabase = async () => {
    await recreateDatabase(spec, DB);
    await prepareAppDatabase(spec, DB);
    // As the superuser, who may CHECKPOINT between the measurements.
    const ds = createDataSource(url, { poolSize: 4, applicationName: 'plumbline-bench' });
    await ds.initialize();
    const user = await ds.getRepository(User).save({ username: 'bench-clerk', displayName: 'Bench clerk', role: 'clerk' as const, active: true });
    return { ds, user };
  };
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

  const results: { copyMs: number; ingestMs: number; peakRss: number; startRss: number; peakHeap: number }[] = [];
  const warn = console.warn;
  console.warn = () => undefined; // the "no queue client" note would print once per run
  for (let run = 1; run <= runs; run++) {
    const { ds, user } = await freshDatabase();
    await ds.query(`CHECKPOINT`);
    const copyMs = await plainCopy(url, files);
    await ds.query(`CHECKPOINT`);
    const phases: string[] = [];
    const trace = (phase: string, ms: number) => phases.push(`${phase} ${secs(ms)}`);
    const r = await withPeakRss(() => ingestUpload({ dataSource: ds, boss: null, limits: DEFAULT_INTAKE_LIMITS, trace }, upload, { id: user.id }));
    if (r.value.kind !== 'accepted') throw new Error(`the bench batch was not accepted: ${JSON.stringify(r.value).slice(0, 2000)}`);
    const stored = (
      await ds.query(
        `SELECT (SELECT count(*) FROM tax_return)::int AS r, (SELECT count(*) FROM line_item)::int AS l, (SELECT count(*) FROM third_party_statement)::int AS s`,
      )
    )[0];
    if (stored.r !== counts.returns || stored.l !== counts.lineItems || stored.s !== counts.statements)
      throw new Error(`stored counts differ: ${JSON.stringify(stored)}`);
    results.push({ copyMs, ingestMs: r.ms, peakRss: r.peakRss, startRss: r.startRss, peakHeap: r.peakHeap });
    await ds.destroy();
    console.log(
      `bench  | run ${run}: plain COPY ${secs(copyMs)}, ingest ${secs(r.ms)} (×${(r.ms / copyMs).toFixed(2)}; this process used ${secs(r.cpuMs)} of CPU), peak RSS ${mb(r.peakRss)} (start ${mb(r.startRss)}), peak heap ${mb(r.peakHeap)}`,
    );
    console.log(`bench  |   phases: ${phases.join(' · ')}`);
  }
  console.warn = warn;

  let xlsxLine = '';
  if (xlsxLines > 0) {
    const xReturns = Math.round(returns * (xlsxLines / lines));
    const xfile = path.join(projectRoot, 'bench-output', `ingest-${xReturns}-${xlsxLines}.xlsx`);
    if (!fs.existsSync(xfile)) await writeXlsxBatch(xfile, { ...opts, returns: xReturns, refPrefix: 'BX' });
    const { ds, user } = await freshDatabase();
    const x = await withPeakRss(() =>
      ingestUpload(
        { dataSource: ds, boss: null, limits: DEFAULT_INTAKE_LIMITS },
        { format: 'xlsx', workbook: { originalName: path.basename(xfile), path: xfile, size: size(xfile) } },
        { id: user.id },
      ),
    );
    if (x.value.kind !== 'accepted') throw new Error(`the XLSX bench batch was not accepted: ${JSON.stringify(x.value).slice(0, 2000)}`);
    const c = x.value.batch.counts;
    await ds.destroy();
    xlsxLine = `XLSX path (exceljs streaming reader): ${c.returns.toLocaleString('en-GB')} returns, ${c.lineItems.toLocaleString('en-GB')} line items, ${mb(size(xfile))} workbook: ${secs(x.ms)} (${Math.round(c.lineItems / (x.ms / 1000)).toLocaleString('en-GB')} line items/s), peak RSS ${mb(x.peakRss)}`;
  }
  const admin = new Client({ connectionString: connectionString(spec, 'postgres') });
  await admin.connect();
  await admin.query(`DROP DATABASE IF EXISTS ${DB}`);
  await admin.end();
  if (!wasRunning) stopCluster(spec, (m) => console.log(`bench  | ${m}`));

  const best = results.reduce((a, b) => (b.ingestMs / b.copyMs < a.ingestMs / a.copyMs ? b : a));
  const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
  console.log(
    [
      '',
      `  bench:ingest  ${counts.returns.toLocaleString('en-GB')} returns, ${counts.lineItems.toLocaleString('en-GB')} line items, ${counts.statements.toLocaleString('en-GB')} statements (CSV, ${mb(totalBytes)})`,
      `  plain COPY into unindexed tables   ${secs(median(results.map((r) => r.copyMs)))}  (median of ${runs})`,
      `  ingest through the API code path   ${secs(median(results.map((r) => r.ingestMs)))}  (median of ${runs}; ${Math.round(counts.lineItems / (median(results.map((r) => r.ingestMs)) / 1000)).toLocaleString('en-GB')} line items/s)`,
      `  ratio ingest / COPY                ×${(median(results.map((r) => r.ingestMs)) / median(results.map((r) => r.copyMs))).toFixed(2)}  (best run ×${(best.ingestMs / best.copyMs).toFixed(2)}; aim ≤ ×3)`,
      `  peak RSS during ingest             ${mb(Math.max(...results.map((r) => r.peakRss)))}  (${mb(Math.max(...results.map((r) => r.peakRss - r.startRss)))} above the process before the ingest; CSV files ${mb(totalBytes)})`,
      ...(xlsxLine ? [`  ${xlsxLine}`] : []),
      '',
    ].join('\n'),
  );
  if (process.argv.includes('--json')) {
    const copyMs = median(results.map((r) => r.copyMs));
    const ingestMs = median(results.map((r) => r.ingestMs));
    console.log(
      JSON.stringify({
        returns: counts.returns,
        lineItems: counts.lineItems,
        runs,
        copySeconds: Math.round(copyMs) / 1000,
        ingestSeconds: Math.round(ingestMs) / 1000,
        ratio: Math.round((ingestMs / copyMs) * 100) / 100,
        peakRssMb: Math.round(Math.max(...results.map((r) => r.peakRss)) / 1024 / 1024),
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

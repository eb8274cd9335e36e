/**
 * `npm run bench:queue [-- --cases 100000 --clients 32 --seconds 15 --pages 40 --json]`
 * `npm run bench:queue -- --cases 100k,1M` measures each size in turn (a fresh database filled
 * to that size, a fresh server) and prints the queue's p95 at each and the largest over the
 * smallest (issue 16's aim: within ×1.5 from 100k to 1M cases).
 *
 * The examination queue under load: a throw-away database with 100,000 cases (filled with
 * SQL generate_series: taxpayers, one batch, returns, scores, cases and their 'opened'
 * events, minimal but valid), the real server process on it, 32 signed-in clients (each its
 * own session) paging `GET /api/cases?sort=priority` with autocannon, then `GET /api/health`
 * with the same number of connections in the same run. Prints requests/s, p50/p95/p99
 * latency and the server's CPU time per request of both, and the ratio. Aim (issue 7): queue
 * p95 under 50 ms and within 3× of the health route's. For context it also measures
 * `GET /api/auth/me` with the same signed-in clients (the cost of any signed-in request:
 * session read and touch, user re-read) and the queue with one client alone.
 *
 * Each queue request is the full product path: session lookup and touch, user re-read,
 * the page query, the count with the same filters, and one access-log line per case shown.
 * Each client walks pages 1..`pages` (25 cases a page) in turn, so offsets up to 1,000 rows
 * deep are measured, not only the first page.
 *
 * The database is set up as `npm start` sets up its own (scripts/lib/app-database.ts), and
 * the server logs in as the application role.
 *
 * Runs on a PostgreSQL cluster of its own (data in bench-output/pg-queue/, gitignored;
 * 127.0.0.1:54349), in a throw-away database `plumbline_bench`, so neither the start
 * command's demo data nor a running `npm test` is touched, and neither can restart the
 * database under the measurement. Creates the cluster the first time, starts it, and stops
 * it at the end (unless it was already running). Starts its own MailDev on free ports so
 * the health route checks a real SMTP server. A benchmark, not a test: it measures and
 * prints, it does not fail on a slow machine.
 */
import 'reflect-metadata';
import autocannon from 'autocannon';
import bcrypt from 'bcryptjs';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { Client } from 'pg';
import { ScoreBreakdownSchema, type ScoreBreakdown } from '../shared/scoring/breakdown';
import { COMPONENT_LABELS, COMPONENTS } from '../shared/scoring/settings';
import { prepareAppDatabase } from './lib/app-database';
import { optionText, parseSizes, type BenchSize } from './lib/sizes';
import { projectRoot } from './lib/local-services';
import { clusterStatus, connectionString, findPgBin, isReady, recreateDatabase, startCluster, stopCluster, type ClusterSpec } from './lib/pg';
import { startMaildev, startProcess, stopProcess, tsxArgs, waitForPort, type Managed } from './lib/processes';

const DB = 'plumbline_bench';

/** The bench's own cluster (same user and password scheme as the local set-ups). */
const BENCH_CLUSTER: ClusterSpec = {
  dataDir: path.join(projectRoot, 'bench-output', 'pg-queue', 'data'),
  port: Number(process.env.PLUMBLINE_BENCH_PG_PORT ?? 54349),
  database: 'plumbline_bench',
  user: 'plumbline',
  password: 'plumbline-local',
  owner: { user: 'plumbline_owner', password: 'plumbline-owner-local' },
  app: { user: 'plumbline_app', password: 'plumbline-app-local' },
};
const PASSWORD = 'bench-queue-password';
const log = (m: string) => console.log(`bench  | ${m}`);

function arg(name: string, dflt: number): number {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : dflt;
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
  });
}

/** One valid breakdown shared by every bench score (the queue never reads it; the case screen would). */
function benchBreakdown(): ScoreBreakdown {
  return ScoreBreakdownSchema.parse({
    riskScore: 50,
    components: COMPONENTS.map((key) => ({
      key,
      label: COMPONENT_LABELS[key],
      weight: 10,
      strength: 0,
      points: 0,
      evidence: 'Benchmark fixture: not computed.',
    })),
    digits: { n: 30, firstDigitCounts: [9, 5, 4, 3, 3, 2, 2, 1, 1], mad: null, expectedMad: null, zScore: null, verdict: 'too_few', secondDigitZ: null },
    preparerPool: null,
    historyPool: null,
    amountAtStakeCents: 0,
    stakeBasis: 'Benchmark fixture',
    totals: { incomeCents: 0, deductionsCents: 0, taxableCents: 0, taxCents: 0, withheldCents: 0, refundCents: 0 },
    selectionCut: 35,
    selected: true,
  });
}

/**
 * Fills the database with `cases` cases in one transaction of set-based INSERTs. States are
 * spread as a working office has them (most open, some assigned, in review, awaiting a
 * reply, a few finished), over 10 examiners; scores, stakes and ages are seeded-random.
 */
async function fill(url: string, cases: number, clients: number): Promise<{ examiners: string[] }> {
  const c = new Client({ connectionString: url });
  await c.connect();
  try {
    await c.query('BEGIN');
    await c.query(`SELECT setseed(0.42)`);
    const hash = await bcrypt.hash(PASSWORD, 10);
    const examiners = Array.from({ length: Math.max(10, clients) }, (_, i) => `bench-examiner-${String(i + 1).padStart(2, '0')}`);
    await c.query(
      `INSERT INTO app_user (username, display_name, role, password_hash, active) SELECT u, 'Bench examiner ' || right(u, 2), 'examiner', $2, true FROM unnest($1::text[]) AS u`,
      [examiners, hash],
    );
    const batch = (
      await c.query(
        `INSERT INTO filing_batch (file_hash, format, file_names, state, return_count, scored_count) VALUES (repeat('b', 64), 'csv', '{bench.csv}', 'scored', $1, $1) RETURNING id`,
        [cases],
      )
    ).rows[0].id as string;
    const taxpayers = Math.ceil(cases / 4);
    await c.query(
      `INSERT INTO taxpayer (tin, name, activity_code)
       SELECT lpad(g::text, 9, '0'), 'Bench Taxpayer ' || g,
              (ARRAY['none','retail','food-service','construction','personal-care','consulting','transport','rental','farming','other'])[1 + g % 10]
         FROM generate_series(1, $1) AS g`,
      [taxpayers],
    );
    // Four tax years per taxpayer, so (taxpayer, year) stays unique as intake requires.
    await c.query(
      `INSERT INTO tax_return (id, batch_id, taxpayer_id, return_ref, tax_year, source_row)
       SELECT gen_random_uuid(), $1, t.id, 'BQ-' || lpad(g::text, 7, '0'), 2022 + (g - 1) / $3, g + 1
         FROM generate_series(1, $2) AS g
         JOIN taxpayer t ON t.tin = lpad((1 + (g - 1) % $3)::text, 9, '0')`,
      [batch, cases, taxpayers],
    );
    // The years' partitions first, as intake does (docs/design.md#partitions-by-tax-year).
    await c.query(`SELECT ensure_tax_year_partitions(y) FROM (SELECT DISTINCT tax_year AS y FROM tax_return WHERE batch_id = $1) t`, [batch]);
    await c.query(
      `INSERT INTO return_score (return_id, tax_year, batch_id, profile_version, status, risk_score, amount_at_stake, priority, breakdown)
       SELECT id, tax_year, $1, 1, 'scored', s, a, round(s * a, 2), $2::jsonb
         FROM (SELECT id, tax_year, round((35 + random() * 65)::numeric, 1) AS s, round((exp(random() * 11.5))::numeric, 2) AS a FROM tax_return WHERE batch_id = $1) x`,
      [batch, JSON.stringify(benchBreakdown())],
    );
    await c.query(
      `INSERT INTO exam_case (return_id, taxpayer_id, batch_id, score_id, tax_year, risk_score, amount_at_stake, priority, state, assignee_id, due_date, opened_at, updated_at,
                              assess_by, assess_basis)
       SELECT s.return_id, r.taxpayer_id, $1, s.id, s.tax_year, s.risk_score, s.amount_at_stake, s.priority, st,
              CASE WHEN st = 'open' THEN NULL ELSE ex[1 + floor(random() * array_length(ex, 1))::int] END,
              CASE WHEN st = 'awaiting_reply' THEN current_date + (floor(random() * 60)::int - 20) END,
              opened, opened,
              -- A deadline as case opening stores one (a fixture date), so the server's start-up
              -- repair has nothing to fill: at 1M cases it would delay the start by minutes.
              make_date(s.tax_year + 4, 12, 31), 'standard'
         FROM (SELECT s.*, CASE WHEN x < 0.70 THEN 'open' WHEN x < 0.80 THEN 'assigned' WHEN x < 0.88 THEN 'in_review' WHEN x < 0.93 THEN 'awaiting_reply'
                                WHEN x < 0.95 THEN 'referred' WHEN x < 0.98 THEN 'closed_no_change' ELSE 'closed_adjusted' END AS st,
                      now() - random() * interval '120 days' AS opened
                 FROM (SELECT *, random() AS x FROM return_score WHERE batch_id = $1) s) s
         JOIN tax_return r ON r.id = s.return_id,
              (SELECT array_agg(id) AS ex FROM app_user WHERE role = 'examiner') e`,
      [batch],
    );
    await c.query(
      `UPDATE exam_case SET closed_at = opened_at + interval '10 days', outcome = 'Benchmark fixture' WHERE state IN ('referred', 'closed_no_change', 'closed_adjusted')`,
    );
    await c.query(`UPDATE exam_case SET adjusted_amount = round(amount_at_stake / 2, 2) WHERE state = 'closed_adjusted'`);
    await c.query(`INSERT INTO case_event (case_id, kind, to_state, at, detail) SELECT id, 'opened', 'open', opened_at, '{"profileVersion":1}' FROM exam_case`);
    await c.query('COMMIT');
    await c.query('VACUUM ANALYZE');
    return { examiners };
  } catch (e) {
    await c.query('ROLLBACK').catch(() => undefined);
    throw e;
  } finally {
    await c.end();
  }
}

/** Signs in through the real route; returns the session cookie. */
async function signIn(base: string, username: string): Promise<string> {
  const res = await fetch(`${base}/api/auth/login`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ username, password: PASSWORD }),
  });
  if (res.status !== 200) throw new Error(`sign-in of ${username} failed: ${res.status} ${await res.text()}`);
  const cookie = res.headers.get('set-cookie');
  if (!cookie) throw new Error('sign-in answered without a session cookie');
  return cookie.split(';')[0];
}

interface Figures {
  requests: number;
  /** CPU time the server process spent per request (user + system), in ms. */
  serverCpuMs: number;
  rps: number;
  p50: number;
  p95: number;
  p99: number;
  non2xx: number;
  errors: number;
}

/** Exact percentiles from every response time autocannon reported (its summary has no p95). */
function percentile(sorted: number[], q: number): number {
  if (!sorted.length) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)];
}

/**
 * Runs autocannon for `seconds` with `connections` connections. `setup` prepares each
 * request of one connection (its own context: cookie, page counter).
 */
/** User + system CPU time of a process so far, in ms (Linux /proc). */
function cpuMsOf(pid: number): number {
  try {
    const fields = fs.readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / 100; // utime, stime in clock ticks (USER_HZ = 100)
  } catch {
    return NaN;
  }
}

async function load(url: string, connections: number, seconds: number, serverPid: number, setup?: autocannon.Request['setupRequest']): Promise<Figures> {
  const times: number[] = [];
  const cpu0 = cpuMsOf(serverPid);
  const result = await new Promise<autocannon.Result>((resolve, reject) => {
    const instance = autocannon(
      { url, connections, duration: seconds, pipelining: 1, requests: setup ? [{ method: 'GET', setupRequest: setup }] : undefined },
      (err, r) => (err ? reject(err) : resolve(r)),
    );
    instance.on('response', (_client, _status, _bytes, responseTime) => times.push(responseTime));
  });
  times.sort((a, b) => a - b);
  return {
    requests: result.requests.total,
    serverCpuMs: (cpuMsOf(serverPid) - cpu0) / Math.max(1, result.requests.total),
    rps: result.requests.total / seconds,
    p50: percentile(times, 0.5),
    p95: percentile(times, 0.95),
    p99: percentile(times, 0.99),
    non2xx: result.non2xx,
    errors: result.errors + result.timeouts,
  };
}

const ms = (x: number) => `${x.toFixed(1).padStart(6)} ms`;
const line = (name: string, f: Figures) =>
  `  ${name.padEnd(40)} ${Math.round(f.rps).toLocaleString('en-GB').padStart(7)} req/s   p50 ${ms(f.p50)}   p95 ${ms(f.p95)}   p99 ${ms(f.p99)}   server CPU ${f.serverCpuMs.toFixed(1)} ms/req   (${f.requests.toLocaleString('en-GB')} requests${f.non2xx ? `, ${f.non2xx} not 2xx` : ''}${f.errors ? `, ${f.errors} errors` : ''})`;

/** One size's figures. */
interface SizeFigures {
  size: BenchSize;
  fillSeconds: number;
  queue: Figures;
  health: Figures;
  me: Figures;
  alone: Figures;
  logged: number;
}

/**
 * Fills a fresh database with `cases` cases, starts the server on it and measures the queue,
 * health, the signed-in baseline and one client alone; stops the server again.
 */
async function measureSize(
  spec: ClusterSpec,
  size: BenchSize,
  opts: { clients: number; seconds: number; pages: number; smtpPort: number },
): Promise<SizeFigures> {
  const { clients, seconds, pages } = opts;
  const cases = size.n;
  await recreateDatabase(spec, DB);
  const { appUrl } = await prepareAppDatabase(spec, DB);
  const url = connectionString(spec, DB);
  const t0 = performance.now();
  const { examiners } = await fill(url, cases, clients);
  const fillSeconds = (performance.now() - t0) / 1000;
  log(`filled ${cases.toLocaleString('en-GB')} cases (with their returns, scores and taxpayers) in ${fillSeconds.toFixed(1)} s`);

  const httpPort = await freePort();
  const [node, nodeArgs] = tsxArgs('server/main.ts');
  const profile = process.argv.includes('--cpu-prof') ? ['--cpu-prof', '--cpu-prof-dir', path.join(projectRoot, 'bench-output', 'profile')] : [];
  const server = startProcess('server', node, [...profile, ...nodeArgs], {
    cwd: projectRoot,
    quiet: true,
    env: {
      ...process.env,
      DATABASE_URL: appUrl,
      PORT: String(httpPort),
      HOST: '127.0.0.1',
      SMTP_PORT: String(opts.smtpPort),
      NODE_ENV: 'production',
      SESSION_SECRET: 'bench-queue-secret-bench-queue-secret',
    },
  });
  try {
    await waitForPort(httpPort, '127.0.0.1', 180_000);
    const base = `http://127.0.0.1:${httpPort}`;
    const health = await fetch(`${base}/api/health`);
    log(`server up on ${base}; health answers ${health.status}`);

    // One session per client, each its own examiner: 32 people paging the queue. One after
    // another, as people arrive: the throttle counts each attempt from an address while its
    // password is checked, so more than 20 at the same instant from one address are refused.
    const cookies: string[] = [];
    for (let i = 0; i < clients; i++) cookies.push(await signIn(base, examiners[i % examiners.length]));
    const check = await fetch(`${base}/api/cases?sort=priority&pageSize=25`, { headers: { cookie: cookies[0] } });
    const first = (await check.json()) as { total: number; items: unknown[] };
    if (check.status !== 200 || first.items.length !== 25) throw new Error(`queue check failed: ${check.status} ${JSON.stringify(first).slice(0, 300)}`);
    log(`${clients} clients signed in; the queue holds ${first.total.toLocaleString('en-GB')} cases (all states)`);

    let next = 0;
    const queueRequest: autocannon.Request['setupRequest'] = (req, context) => {
      const ctx = context as { cookie?: string; page?: number };
      if (!ctx.cookie) {
        ctx.cookie = cookies[next++ % cookies.length];
        ctx.page = (next * 7) % pages; // clients start on different pages
      }
      ctx.page = (ctx.page! % pages) + 1;
      return { ...req, path: `/api/cases?sort=priority&page=${ctx.page}&pageSize=25`, headers: { ...(req.headers ?? {}), cookie: ctx.cookie } };
    };
    // The signed-in baseline: the same session, CSRF and user checks, no queue work.
    const meRequest: autocannon.Request['setupRequest'] = (req, context) => {
      const ctx = context as { cookie?: string };
      if (!ctx.cookie) ctx.cookie = cookies[next++ % cookies.length];
      return { ...req, path: '/api/auth/me', headers: { ...(req.headers ?? {}), cookie: ctx.cookie } };
    };

    log(`warming up (3 s of each)…`);
    const pid = server.child.pid!;
    await load(`${base}/api/cases`, clients, 3, pid, queueRequest);
    await load(`${base}/api/health`, clients, 3, pid);
    log(`measuring: ${clients} connections, ${seconds} s each`);
    const queue = await load(`${base}/api/cases`, clients, seconds, pid, queueRequest);
    const healthFig = await load(`${base}/api/health`, clients, seconds, pid);
    const me = await load(`${base}/api/auth/me`, clients, seconds, pid, meRequest);
    // What one examiner alone sees (no queueing behind other clients).
    const alone = await load(`${base}/api/cases`, 1, Math.min(seconds, 5), pid, queueRequest);
    const c = new Client({ connectionString: url });
    await c.connect();
    const logged = await c
      .query(`SELECT count(*)::int AS n FROM access_log WHERE route = 'GET /api/cases'`)
      .then((r) => r.rows[0].n as number)
      .finally(() => c.end());
    return { size, fillSeconds, queue, health: healthFig, me, alone, logged };
  } finally {
    await stopProcess(server);
  }
}

async function main() {
  const sizes = parseSizes(optionText('cases') ?? '100000', 'cases');
  const clients = arg('clients', 32);
  const seconds = arg('seconds', 15);
  const pages = arg('pages', 40);
  const spec = BENCH_CLUSTER;
  const bin = findPgBin();
  const wasRunning = bin ? isReady(bin, spec) : false;
  let mail: Managed | null = null;
  const mailDir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-bench-mail-'));
  const measured: SizeFigures[] = [];
  try {
    await startCluster(spec, log);
    log(`PostgreSQL ${clusterStatus(spec)}`);
    const [smtpPort, mailWebPort] = [await freePort(), await freePort()];
    mail = startMaildev(smtpPort, mailWebPort, mailDir, true);
    await waitForPort(smtpPort);
    for (const size of sizes) {
      log(`size ${size.label}: ${size.n.toLocaleString('en-GB')} cases`);
      measured.push(await measureSize(spec, size, { clients, seconds, pages, smtpPort }));
    }

    const report: string[] = [''];
    for (const m of measured) {
      report.push(
        `  bench:queue  ${m.size.n.toLocaleString('en-GB')} cases, ${clients} signed-in clients, ${seconds} s per route, ${os.cpus().length} CPUs (filled in ${m.fillSeconds.toFixed(1)} s)`,
        line(`GET /api/cases?sort=priority (p1–${pages})`, m.queue),
        line('GET /api/health', m.health),
        line('GET /api/auth/me (signed-in baseline)', m.me),
        line('GET /api/cases, one client alone', m.alone),
        `  queue p95 / health p95                    ×${(m.queue.p95 / m.health.p95).toFixed(2)}   (aim: p95 under 50 ms and within ×3 of health)`,
        `  access-log lines written for queue views: ${m.logged.toLocaleString('en-GB')} (one per case shown)`,
        '',
      );
    }
    const first = measured[0];
    const last = measured[measured.length - 1];
    if (measured.length > 1) {
      report.push(
        `  queue p95 by size: ${measured.map((m) => `${m.size.label} ${m.queue.p95.toFixed(1)} ms (alone ${m.alone.p95.toFixed(1)} ms)`).join(' · ')}`,
        `  queue p95 at the largest size over the smallest: ×${(last.queue.p95 / first.queue.p95).toFixed(2)} (aim ≤ ×1.5)`,
        '',
      );
    }
    console.log(report.join('\n'));
    if (process.argv.includes('--json')) {
      // The issue-16 shape: p95 by size; the other figures are the largest size's.
      const bySize = <T>(f: (m: SizeFigures) => T) => Object.fromEntries(measured.map((m) => [String(m.size.n), f(m)]));
      console.log(
        JSON.stringify({
          cases: last.size.n,
          clients,
          seconds,
          p95Ms: bySize((m) => m.queue.p95),
          healthP95Ms: bySize((m) => m.health.p95),
          aloneP95Ms: bySize((m) => m.alone.p95),
          rps: bySize((m) => Math.round(m.queue.rps)),
          p95LargestOverSmallest: Math.round((last.queue.p95 / first.queue.p95) * 100) / 100,
        }),
      );
    }
  } finally {
    if (mail) await stopProcess(mail);
    fs.rmSync(mailDir, { recursive: true, force: true });
    const admin = new Client({ connectionString: connectionString(spec, 'postgres') });
    await admin.connect().then(
      async () => {
        await admin.query(`DROP DATABASE IF EXISTS ${DB} WITH (FORCE)`);
        await admin.end();
      },
      () => undefined,
    );
    if (!wasRunning) stopCluster(spec, log);
  }
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(`bench:queue failed: ${e instanceof Error ? e.stack : String(e)}`);
    process.exit(1);
  },
);

/**
 * `npm test`: every test (unit, API, worker, app, browser) against services of its own:
 * PostgreSQL in .pg-test on 127.0.0.1:54339 and MailDev on 1026/1081, so it never touches
 * the start command's demo data and can run while `npm start` is up.
 *
 * Each API/worker test file gets a fresh database cloned from a migrated template
 * (tests/helpers/test-db.ts). Extra arguments go to jest: `npm test -- tests/unit`.
 */
import 'reflect-metadata';
import { spawn, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { prepareAppDatabase } from './lib/app-database';
import { projectRoot, testSetup as T } from './lib/local-services';
import { connectionString, recreateDatabase, startCluster, stopCluster } from './lib/pg';
import { isPortFree, startMaildev, stopProcess, waitForPort, type Managed } from './lib/processes';
import { ensureWebBuild } from './lib/web-build';

// One template per run, so two `npm test` runs at once (a developer and a helper, say) never
// rebuild each other's template.
export const TEMPLATE_DB = `plumbline_template_${process.pid}`;
const log = (m: string) => console.log(`test   | ${m}`);

/** Live test runs register here; the last one to finish stops the shared test cluster. */
const runsDir = path.join(path.dirname(T.cluster.dataDir), 'runs');

function otherLiveRuns(): number[] {
  if (!fs.existsSync(runsDir)) return [];
  return fs
    .readdirSync(runsDir)
    .map(Number)
    .filter((pid) => pid !== process.pid && Number.isInteger(pid))
    .filter((pid) => {
      try {
        process.kill(pid, 0);
        return true;
      } catch {
        fs.rmSync(path.join(runsDir, String(pid)), { force: true });
        return false;
      }
    });
}

async function freePortFrom(start: number): Promise<number> {
  for (let p = start; p < start + 200; p++) if (await isPortFree(p)) return p;
  throw new Error(`no free port near ${start}`);
}

/**
 * Migrations, pg-boss's schema and queues, and the application role's grants, once: each
 * cloned database keeps them (grants live in the database; roles are cluster-wide).
 */
async function prepareTemplate(): Promise<void> {
  await recreateDatabase(T.cluster, TEMPLATE_DB);
  await prepareAppDatabase(T.cluster, TEMPLATE_DB);
}

/**
 * The checks of a full run, before the tests: `npm run lint` (ESLint, then `prettier --check`)
 * so the conventions hold like the tests do, and `npm run typecheck` (Expo Router's
 * typed-route declarations, then `tsc --noEmit`) because jest runs TypeScript through SWC and
 * Babel, which strip types without checking them. Skipped when jest gets arguments (one file
 * while working); PLUMBLINE_SKIP_LINT=1 skips both, PLUMBLINE_SKIP_TYPECHECK=1 the typecheck.
 */
const PRE_CHECKS = [
  {
    script: 'lint',
    what: 'eslint, prettier --check',
    skippedBy: ['PLUMBLINE_SKIP_LINT'],
    onFail: '`npm run format` fixes the layout and what eslint can fix; fix the rest by hand',
  },
  {
    script: 'typecheck',
    what: 'typed routes, tsc --noEmit',
    skippedBy: ['PLUMBLINE_SKIP_LINT', 'PLUMBLINE_SKIP_TYPECHECK'],
    onFail: 'fix the errors above (they name file, line and column)',
  },
];

/** Runs {@link PRE_CHECKS} in turn; false after the first that fails (its output is on screen). */
function preChecksPass(jestArgs: string[]): boolean {
  if (jestArgs.length > 0) return true;
  for (const c of PRE_CHECKS) {
    if (c.skippedBy.some((v) => process.env[v] === '1')) continue;
    log(`${c.script}: npm run ${c.script} (${c.what}); ${c.skippedBy[c.skippedBy.length - 1]}=1 skips it`);
    const r = spawnSync('npm', ['run', '--silent', c.script], { cwd: projectRoot, stdio: ['ignore', 'inherit', 'inherit'] });
    if (r.status !== 0) {
      log(`${c.script} failed: ${c.onFail}`);
      return false;
    }
  }
  return true;
}

async function main(): Promise<number> {
  const t0 = Date.now();
  const jestArgs = process.argv.slice(2);
  if (!preChecksPass(jestArgs)) return 1;
  let maildev: Managed | null = null;
  fs.mkdirSync(runsDir, { recursive: true });
  fs.writeFileSync(path.join(runsDir, String(process.pid)), '');
  try {
    await startCluster(T.cluster, log);
    await prepareTemplate();
    log('template database migrated');
    // The usual ports when free; others when another run holds them.
    const smtpPort = await freePortFrom(T.smtpPort);
    const mailWebPort = await freePortFrom(smtpPort === T.smtpPort ? T.mailWebPort : T.mailWebPort + 100 + (process.pid % 50));
    const mailDir = `${T.maildevDir}-${process.pid}`;
    fs.rmSync(mailDir, { recursive: true, force: true });
    maildev = startMaildev(smtpPort, mailWebPort, mailDir, true);
    // Generous: with several runs on two shared cores MailDev has taken over 30 s to listen.
    await waitForPort(smtpPort, '127.0.0.1', 120_000);
    await waitForPort(mailWebPort, '127.0.0.1', 120_000);
    if (!process.env.PLUMBLINE_SKIP_WEB_BUILD) ensureWebBuild(log);

    const env = {
      ...process.env,
      NODE_ENV: 'test' as const,
      PLUMBLINE_TEST_CLUSTER: JSON.stringify(T.cluster),
      PLUMBLINE_TEST_TEMPLATE: TEMPLATE_DB,
      PLUMBLINE_TEST_SMTP_PORT: String(smtpPort),
      PLUMBLINE_TEST_MAIL_WEB_PORT: String(mailWebPort),
    };
    const jest = path.join(projectRoot, 'node_modules', '.bin', 'jest');
    // Results also go to a JSON file, so the run can end on one plain "N passed, N failed" line.
    const resultsFile = path.join(projectRoot, '.data', `jest-results-${process.pid}.json`);
    fs.mkdirSync(path.dirname(resultsFile), { recursive: true });
    const args = ['--maxWorkers=2', ...(process.env.CI ? ['--ci'] : []), '--json', `--outputFile=${resultsFile}`, ...jestArgs];
    log(`jest ${args.join(' ')}`);
    const code: number = await new Promise((resolve) => {
      const child = spawn(jest, args, { cwd: projectRoot, stdio: 'inherit', env });
      const forward = (sig: NodeJS.Signals) => child.kill(sig);
      process.on('SIGINT', forward);
      process.on('SIGTERM', forward);
      child.on('exit', (c) => resolve(c ?? 1));
    });
    log(`finished in ${Math.round((Date.now() - t0) / 1000)} s with exit code ${code}`);
    if (fs.existsSync(resultsFile)) {
      const r = JSON.parse(fs.readFileSync(resultsFile, 'utf8')) as {
        numPassedTests: number;
        numFailedTests: number;
        numPendingTests: number;
        numRuntimeErrorTestSuites: number;
      };
      fs.rmSync(resultsFile, { force: true });
      const failed = r.numFailedTests + r.numRuntimeErrorTestSuites;
      summary = `tests: ${r.numPassedTests} passed, ${failed} failed${r.numPendingTests ? `, ${r.numPendingTests} skipped` : ''}`;
    }
    return code;
  } catch (e) {
    console.error(`test   | ${e instanceof Error ? e.message : String(e)}`);
    return 1;
  } finally {
    if (maildev) await stopProcess(maildev);
    fs.rmSync(`${T.maildevDir}-${process.pid}`, { recursive: true, force: true });
    fs.rmSync(path.join(runsDir, String(process.pid)), { force: true });
    try {
      const { Client } = await import('pg');
      const c = new Client({ connectionString: connectionString(T.cluster, 'postgres') });
      await c.connect();
      await c.query(`DROP DATABASE IF EXISTS "${TEMPLATE_DB}" WITH (FORCE)`);
      await c.end();
    } catch {
      // the cluster may already be down
    }
    try {
      if (otherLiveRuns().length === 0) stopCluster(T.cluster, log);
      else log('another test run is using the test database; leaving it running');
    } catch (e) {
      console.error(e);
    }
  }
}

/** The run's last line (printed after the services stop, so it is the closing line). */
let summary = '';

main().then((code) => {
  if (summary) console.log(summary);
  process.exit(code);
});

/**
 * `npm test`: every test (unit, API, worker, app, browser) against services of its own:
 * PostgreSQL in .pg-test on 127.0.0.1:54339 and MailDev on 1026/1081, so it never touches
 * the start command's demo data and can run while `npm start` is up.
 *
 * Each API/worker test file gets a fresh database cloned from a migrated template
 * (tests/helpers/test-db.ts). Extra arguments go to jest: `npm test -- tests/unit`.
 */
import 'reflect-metadata';
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { createDataSource, runMigrations } from '../server/db/data-source';
import { createBoss, ensureQueues } from '../server/queue/queues';
import { projectRoot, testSetup as T } from './lib/local-services';
import { connectionString, recreateDatabase, startCluster, stopCluster } from './lib/pg';
import { isPortFree, startMaildev, stopProcess, waitForPort, type Managed } from './lib/processes';
import { ensureWebBuild } from './lib/web-build';

export const TEMPLATE_DB = 'plumbline_template';
const log = (m: string) => console.log(`test   | ${m}`);

async function prepareTemplate(): Promise<void> {
  await recreateDatabase(T.cluster, TEMPLATE_DB);
  const url = connectionString(T.cluster, TEMPLATE_DB);
  const ds = createDataSource(url, { poolSize: 2 });
  await ds.initialize();
  await runMigrations(ds);
  await ds.destroy();
  // Install pg-boss's schema and queues once, so each cloned database has them ready.
  const boss = createBoss(url, 'server');
  await boss.start();
  await ensureQueues(boss);
  await boss.stop({ graceful: false, wait: true });
}

async function main(): Promise<number> {
  const t0 = Date.now();
  const jestArgs = process.argv.slice(2);
  let maildev: Managed | null = null;
  try {
    await startCluster(T.cluster, log);
    await prepareTemplate();
    log('template database migrated');
    if (!(await isPortFree(T.smtpPort))) {
      throw new Error(`Port ${T.smtpPort} (test MailDev) is in use: is another \`npm test\` running? Wait for it to finish.`);
    }
    fs.rmSync(T.maildevDir, { recursive: true, force: true });
    maildev = startMaildev(T.smtpPort, T.mailWebPort, T.maildevDir, true);
    await waitForPort(T.smtpPort);
    await waitForPort(T.mailWebPort);
    if (!process.env.PLUMBLINE_SKIP_WEB_BUILD) ensureWebBuild(log);

    const env = {
      ...process.env,
      NODE_ENV: 'test' as const,
      PLUMBLINE_TEST_CLUSTER: JSON.stringify(T.cluster),
      PLUMBLINE_TEST_TEMPLATE: TEMPLATE_DB,
      PLUMBLINE_TEST_SMTP_PORT: String(T.smtpPort),
      PLUMBLINE_TEST_MAIL_WEB_PORT: String(T.mailWebPort),
    };
    const jest = path.join(projectRoot, 'node_modules', '.bin', 'jest');
    const args = ['--maxWorkers=2', ...(process.env.CI ? ['--ci'] : []), ...jestArgs];
    log(`jest ${args.join(' ')}`);
    const code: number = await new Promise((resolve) => {
      const child = spawn(jest, args, { cwd: projectRoot, stdio: 'inherit', env });
      const forward = (sig: NodeJS.Signals) => child.kill(sig);
      process.on('SIGINT', forward);
      process.on('SIGTERM', forward);
      child.on('exit', (c) => resolve(c ?? 1));
    });
    log(`finished in ${Math.round((Date.now() - t0) / 1000)} s with exit code ${code}`);
    return code;
  } catch (e) {
    console.error(`test   | ${e instanceof Error ? e.message : String(e)}`);
    return 1;
  } finally {
    if (maildev) await stopProcess(maildev);
    try {
      stopCluster(T.cluster, log);
    } catch (e) {
      console.error(e);
    }
  }
}

main().then((code) => process.exit(code));

/**
 * The worker process: takes jobs from pg-boss and runs them. Stops cleanly on SIGTERM or
 * SIGINT, also while still starting: it finishes or abandons the current job (jobs are
 * idempotent, so an abandoned one is retried safely) and closes its connections.
 */
import 'reflect-metadata';
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import { ConfigError, loadConfig } from '../server/config';
import { createDataSource } from '../server/db/data-source';
import { surviveConnectionLoss } from '../server/queue/connection-loss';
import { createBoss, ensureQueues } from '../server/queue/queues';
import { registerDailyPass } from './daily-pass';
import { registerJobs } from './jobs';

let dataSource: DataSource | null = null;
let boss: PgBoss | null = null;
let stopping = false;

async function stop(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`[worker] ${signal}: stopping`);
  await boss?.stop({ graceful: true, timeout: 10_000, wait: true }).catch(() => undefined);
  await dataSource?.destroy().catch(() => undefined);
  process.exit(0);
}
// Registered before anything else, so a signal during start-up also ends the process cleanly.
process.on('SIGINT', () => void stop('SIGINT'));
process.on('SIGTERM', () => void stop('SIGTERM'));
// A PostgreSQL outage must not end the worker (server/queue/connection-loss.ts).
surviveConnectionLoss('worker');

async function main() {
  const config = loadConfig();
  dataSource = createDataSource(config.DATABASE_URL, { applicationName: 'plumbline-worker', poolSize: 6 });
  await dataSource.initialize();
  boss = createBoss(config.DATABASE_URL, 'worker');
  boss.on('error', (e) => console.error('[worker] queue error:', e.message));
  await boss.start();
  await ensureQueues(boss);
  if (stopping) return;
  await registerJobs({ boss, dataSource, config });
  await registerDailyPass({ boss, dataSource, config });
  console.log('[worker] ready');
}

main().catch((e) => {
  console.error(e instanceof ConfigError ? e.message : `[worker] failed to start: ${e instanceof Error ? e.stack : e}`);
  process.exit(1);
});

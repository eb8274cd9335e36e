/**
 * The worker process: takes jobs from pg-boss and runs them. Stops cleanly on SIGTERM:
 * it finishes or abandons the current job (jobs are idempotent, so an abandoned one is
 * retried safely) and closes its connections.
 */
import 'reflect-metadata';
import { ConfigError, loadConfig } from '../server/config';
import { createDataSource } from '../server/db/data-source';
import { createBoss, ensureQueues } from '../server/queue/queues';
import { registerJobs } from './jobs';

async function main() {
  const config = loadConfig();
  const dataSource = createDataSource(config.DATABASE_URL, { applicationName: 'plumbline-worker', poolSize: 6 });
  await dataSource.initialize();
  const boss = createBoss(config.DATABASE_URL, 'worker');
  boss.on('error', (e) => console.error('[worker] queue error:', e.message));
  await boss.start();
  await ensureQueues(boss);
  await registerJobs({ boss, dataSource, config });
  console.log('[worker] ready');

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    console.log(`[worker] ${signal}: stopping`);
    await boss.stop({ graceful: true, timeout: 10_000, wait: true }).catch(() => undefined);
    await dataSource.destroy().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
}

main().catch((e) => {
  console.error(e instanceof ConfigError ? e.message : `[worker] failed to start: ${e instanceof Error ? e.stack : e}`);
  process.exit(1);
});

/**
 * The server process: connects, checks the schema, starts the queue client and listens.
 * Migrations are applied by the start command before this runs (never implicitly here).
 */
import 'reflect-metadata';
import type { Server } from 'node:http';
import { createApp } from './app';
import { ConfigError, loadConfig } from './config';
import { createDataSource } from './db/data-source';
import { createMailer } from './mail/mailer';
import { createBoss, ensureQueues } from './queue/queues';

async function main() {
  const config = loadConfig();
  const dataSource = createDataSource(config.DATABASE_URL, { applicationName: 'plumbline-server' });
  await dataSource.initialize();
  const boss = createBoss(config.DATABASE_URL, 'server');
  boss.on('error', (e) => console.error('[server] queue error:', e.message));
  await boss.start();
  await ensureQueues(boss);
  const mailer = createMailer(config);

  const app = createApp({ config, dataSource, boss, mailer });
  const server: Server = await new Promise((resolve, reject) => {
    const s = app.listen(config.PORT, config.HOST, () => resolve(s));
    s.on('error', reject);
  });
  console.log(`[server] listening on http://${config.HOST}:${config.PORT}`);

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    console.log(`[server] ${signal}: closing`);
    server.closeAllConnections?.();
    await new Promise((r) => server.close(() => r(null)));
    await boss.stop({ graceful: true, timeout: 5000 }).catch(() => undefined);
    mailer.close();
    await dataSource.destroy().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
}

main().catch((e) => {
  console.error(e instanceof ConfigError ? e.message : `[server] failed to start: ${e instanceof Error ? e.stack : e}`);
  process.exit(1);
});

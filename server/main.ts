/**
 * The server process: connects, starts the queue client and listens. Migrations are applied
 * by the start command before this runs (never implicitly here). Stops cleanly on SIGTERM or
 * SIGINT, also while still starting.
 *
 * With `WEB_CONCURRENCY` above 1 this process does the start-up repairs once and then becomes
 * the primary of that many worker processes on the same port (server/cluster.ts,
 * docs/operations.md#several-server-processes); each worker runs the rest of this file. With 1
 * (the default) it is one process as before, so a kill -9 of it stops the server.
 */
import 'reflect-metadata';
import cluster from 'node:cluster';
import type { Server } from 'node:http';
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import { createApp } from './app';
import { cleanUploadSpool } from './batches/intake/upload-spool';
import { recoverInterruptedIntake } from './batches/batch.service';
import { fillMissingDeadlines } from './cases/case-deadline.service';
import { startPrimary, type Primary } from './cluster';
import { ConfigError, loadConfig, type Config } from './config';
import { createDataSource } from './db/data-source';
import { createMailer, type Mailer } from './mail/mailer';
import { createBoss, ensureQueues } from './queue/queues';

let dataSource: DataSource | null = null;
let boss: PgBoss | null = null;
let mailer: Mailer | null = null;
let server: Server | null = null;
let primary: Primary | null = null;
let stopping = false;

/** How this process names itself in its log lines. */
const who = cluster.isWorker ? `[server worker ${process.env.PLUMBLINE_SERVER_WORKER ?? cluster.worker?.id}]` : '[server]';

async function stop(signal: NodeJS.Signals) {
  if (stopping) return;
  stopping = true;
  console.log(`${who} ${signal}: closing`);
  if (primary) {
    await primary.stop(signal);
    await dataSource?.destroy().catch(() => undefined);
    process.exit(0);
  }
  if (server) {
    server.closeAllConnections?.();
    await new Promise((r) => server!.close(() => r(null)));
  }
  await boss?.stop({ graceful: true, timeout: 5000 }).catch(() => undefined);
  mailer?.close();
  await dataSource?.destroy().catch(() => undefined);
  process.exit(0);
}
// Registered before anything else, so a signal during start-up also ends the process cleanly.
process.on('SIGINT', () => void stop('SIGINT'));
process.on('SIGTERM', () => void stop('SIGTERM'));

/**
 * Repairs left by the previous run, done once when the server starts. Never in a worker that
 * the primary starts again: a batch another worker is checking at that moment would look
 * half-checked and be rejected under it.
 */
async function startUpRepairs(ds: DataSource): Promise<void> {
  cleanUploadSpool(); // upload files left by a server that crashed mid-read
  // A batch a crash (of this server's previous run) left half-checked is ended here, so its
  // file can be sent again at once.
  for (const b of await recoverInterruptedIntake(ds)) {
    console.log(
      `[server] batch ${b.id} (${b.fileNames.length} file${b.fileNames.length === 1 ? '' : 's'}) was left unfinished by a stop; marked rejected, nothing of it kept; its file may be uploaded again`,
    );
  }
  // Cases opened before assessment deadlines were kept (issue 13) get theirs now.
  const filled = await fillMissingDeadlines(ds);
  if (filled) console.log(`[server] assessment deadlines worked out for ${filled} earlier case${filled === 1 ? '' : 's'}`);
}

/** The primary of several workers: repairs once, then forks and watches them. */
async function runPrimary(config: Config) {
  dataSource = createDataSource(config.DATABASE_URL, { applicationName: 'plumbline-server' });
  await dataSource.initialize();
  await startUpRepairs(dataSource);
  await dataSource.destroy();
  dataSource = null;
  if (stopping) return;
  primary = startPrimary(config.WEB_CONCURRENCY, (line) => console.log(line));
  try {
    await primary.ready;
  } catch (e) {
    await primary.stop('SIGTERM'); // the workers that did start
    throw e;
  }
  if (!stopping) console.log(`[server] listening on http://${config.HOST}:${config.PORT} (${config.WEB_CONCURRENCY} processes)`);
}

async function main() {
  const config = loadConfig();
  if (cluster.isPrimary && config.WEB_CONCURRENCY > 1) return runPrimary(config);
  dataSource = createDataSource(config.DATABASE_URL, { applicationName: 'plumbline-server' });
  await dataSource.initialize();
  if (cluster.isPrimary) await startUpRepairs(dataSource);
  boss = createBoss(config.DATABASE_URL, 'server');
  boss.on('error', (e) => console.error('[server] queue error:', e.message));
  await boss.start();
  await ensureQueues(boss);
  mailer = createMailer(config);
  if (stopping) return;
  const app = createApp({ config, dataSource, boss, mailer });
  server = await new Promise<Server>((resolve, reject) => {
    const s = app.listen(config.PORT, config.HOST, () => resolve(s));
    s.on('error', reject);
  });
  // A worker's own line must not say "listening on": that line is the primary's, once all listen.
  console.log(cluster.isWorker ? `${who} ready (pid ${process.pid})` : `[server] listening on http://${config.HOST}:${config.PORT}`);
}

main().catch((e) => {
  console.error(e instanceof ConfigError ? e.message : `${who} failed to start: ${e instanceof Error ? e.stack : e}`);
  process.exit(1);
});

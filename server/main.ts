/**
 * The server process: connects, starts the queue client and listens. Migrations are applied
 * by the start command before this runs (never implicitly here). Stops cleanly on SIGTERM or
 * SIGINT, also while still starting.
 */
import 'reflect-metadata';
import type { Server } from 'node:http';
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import { createApp } from './app';
import { cleanUploadSpool } from './batches/intake/upload-spool';
import { recoverInterruptedIntake } from './batches/batch.service';
import { fillMissingDeadlines } from './cases/case-deadline.service';
import { ConfigError, loadConfig } from './config';
import { createDataSource } from './db/data-source';
import { createMailer, type Mailer } from './mail/mailer';
import { createBoss, ensureQueues } from './queue/queues';

let dataSource: DataSource | null = null;
let boss: PgBoss | null = null;
let mailer: Mailer | null = null;
let server: Server | null = null;
let stopping = false;

async function stop(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`[server] ${signal}: closing`);
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

async function main() {
  const config = loadConfig();
  cleanUploadSpool(); // upload files left by a server that crashed mid-read
  dataSource = createDataSource(config.DATABASE_URL, { applicationName: 'plumbline-server' });
  await dataSource.initialize();
  // A batch a crash (of this server's previous run) left half-checked is ended here, so its
  // file can be sent again at once.
  for (const b of await recoverInterruptedIntake(dataSource)) {
    console.log(
      `[server] batch ${b.id} (${b.fileNames.length} file${b.fileNames.length === 1 ? '' : 's'}) was left unfinished by a stop; marked rejected, nothing of it kept; its file may be uploaded again`,
    );
  }
  // Cases opened before assessment deadlines were kept (issue 13) get theirs now.
  const filled = await fillMissingDeadlines(dataSource);
  if (filled) console.log(`[server] assessment deadlines worked out for ${filled} earlier case${filled === 1 ? '' : 's'}`);
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
  console.log(`[server] listening on http://${config.HOST}:${config.PORT}`);
}

main().catch((e) => {
  console.error(e instanceof ConfigError ? e.message : `[server] failed to start: ${e instanceof Error ? e.stack : e}`);
  process.exit(1);
});

/**
 * `npm start`: the whole product on this machine, with demo data.
 * PostgreSQL (own data folder, 127.0.0.1:54329) → migrations → demo seed → MailDev
 * (SMTP 1025, web 1080) → web build if stale → worker and server (8080).
 * The server, the worker and MailDev are supervised (scripts/lib/supervisor.ts): one that
 * crashes is started again after a back-off, and the rest stay up. The server and worker log
 * in as the application role, never as the owner or the superuser (server/db/roles.ts).
 * Ctrl-C / SIGTERM stops everything it started, the database included, and no restart
 * happens while stopping. docs/operations.md shows how to run it as a service.
 */
import 'reflect-metadata';
import { seedDemo } from '../server/seed/demo-seed';
import { prepareAppDatabase } from './lib/app-database';
import { startSetup as S } from './lib/local-services';
import { startCluster, stopCluster } from './lib/pg';
import { isPortFree, startMaildev, startProcess, tsxArgs, waitForPort } from './lib/processes';
import { supervise, type Supervised } from './lib/supervisor';
import { ensureWebBuild } from './lib/web-build';

const log = (m: string) => console.log(`start  | ${m}`);

async function main() {
  const children: Supervised[] = [];
  let shuttingDown = false;
  const shutdown = async (code: number) => {
    if (shuttingDown) return;
    shuttingDown = true;
    log('stopping…');
    // Supervision ends for all first, so a child that dies while another is being stopped
    // is not started again; then each is stopped in turn, server first.
    for (const c of children) c.hold();
    for (const c of [...children].reverse()) await c.stop();
    try {
      stopCluster(S.cluster, log);
    } catch (e) {
      console.error(e);
    }
    log('stopped.');
    process.exit(code);
  };
  process.on('SIGINT', () => void shutdown(0));
  process.on('SIGTERM', () => void shutdown(0));

  try {
    for (const [port, what] of [
      [S.httpPort, 'web/API server'],
      [S.smtpPort, 'MailDev SMTP'],
      [S.mailWebPort, 'MailDev web'],
    ] as const) {
      if (!(await isPortFree(port))) {
        throw new Error(`Port ${port} (${what}) is already in use. Is Plumbline already running? Stop it, or free the port, and try again.`);
      }
    }

    await startCluster(S.cluster, log);
    // Migrations and the demo seed as the owner; then the application role gets its grants.
    let seeded = '';
    const db = await prepareAppDatabase(S.cluster, S.cluster.database, async (ds) => {
      seeded = await seedDemo(ds);
    });
    log(db.applied.length ? `migrations applied: ${db.applied.join(', ')}` : 'schema up to date');
    log(seeded);
    if (shuttingDown) return;

    const restartLog = (m: string) => console.error(`start  | ${m}`);
    children.push(supervise('mail', () => startMaildev(S.smtpPort, S.mailWebPort, S.maildevDir), restartLog));
    ensureWebBuild(log);
    if (shuttingDown) return;

    const env = {
      ...process.env,
      DATABASE_URL: db.appUrl,
      PORT: String(S.httpPort),
      SMTP_HOST: '127.0.0.1',
      SMTP_PORT: String(S.smtpPort),
      NODE_ENV: 'development' as const,
    };
    children.push(supervise('worker', () => startProcess('worker', ...tsxArgs('worker/main.ts'), { env }), restartLog));
    children.push(supervise('server', () => startProcess('server', ...tsxArgs('server/main.ts'), { env }), restartLog));
    await waitForPort(S.httpPort, '127.0.0.1', 60_000);
    await waitForPort(S.smtpPort);
    console.log(
      [
        '',
        '  Plumbline is running (local demo).',
        `  App and API   http://127.0.0.1:${S.httpPort}`,
        `  Health        http://127.0.0.1:${S.httpPort}/api/health`,
        `  Mail (fake)   http://127.0.0.1:${S.mailWebPort}   SMTP 127.0.0.1:${S.smtpPort}`,
        `  Database      postgres://127.0.0.1:${S.cluster.port}/${S.cluster.database}   (npm run db -- psql: the owner's session)`,
        '  Demo sign-ins clerk, examiner, examiner2, supervisor, admin; password plumbline-demo (demo only)',
        '  Press Ctrl-C to stop everything.',
        '',
      ].join('\n'),
    );
  } catch (e) {
    console.error(`start  | ${e instanceof Error ? e.message : String(e)}`);
    await shutdown(1);
  }
}

void main();

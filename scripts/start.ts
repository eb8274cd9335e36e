/**
 * `npm start`: the whole product on this machine, with demo data.
 * PostgreSQL (own data folder, 127.0.0.1:54329) → migrations → demo seed → MailDev
 * (SMTP 1025, web 1080) → web build if stale → worker and server (8080).
 * Ctrl-C / SIGTERM stops everything it started, the database included.
 */
import 'reflect-metadata';
import { createDataSource, runMigrations } from '../server/db/data-source';
import { seedDemo } from '../server/seed/demo-seed';
import { startSetup as S } from './lib/local-services';
import { connectionString, startCluster, stopCluster } from './lib/pg';
import { isPortFree, startMaildev, startProcess, stopProcess, tsxArgs, waitForPort, type Managed } from './lib/processes';
import { ensureWebBuild } from './lib/web-build';

const log = (m: string) => console.log(`start  | ${m}`);

async function main() {
  const children: Managed[] = [];
  let shuttingDown = false;
  const shutdown = async (code: number) => {
    if (shuttingDown) return;
    shuttingDown = true;
    log('stopping…');
    for (const c of [...children].reverse()) await stopProcess(c);
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
    const url = connectionString(S.cluster);
    const ds = createDataSource(url, { poolSize: 2 });
    await ds.initialize();
    const applied = await runMigrations(ds);
    log(applied.length ? `migrations applied: ${applied.join(', ')}` : 'schema up to date');
    log(await seedDemo(ds));
    await ds.destroy();

    children.push(startMaildev(S.smtpPort, S.mailWebPort, S.maildevDir));
    ensureWebBuild(log);

    const env = {
      ...process.env,
      DATABASE_URL: url,
      PORT: String(S.httpPort),
      SMTP_HOST: '127.0.0.1',
      SMTP_PORT: String(S.smtpPort),
      NODE_ENV: 'development' as const,
    };
    children.push(startProcess('worker', ...tsxArgs('worker/main.ts'), { env }));
    const server = startProcess('server', ...tsxArgs('server/main.ts'), { env });
    children.push(server);
    for (const c of children) {
      void c.exited.then((code) => {
        if (!shuttingDown) {
          console.error(`start  | ${c.name} exited unexpectedly (code ${code}); stopping everything.`);
          void shutdown(1);
        }
      });
    }
    await waitForPort(S.httpPort, '127.0.0.1', 60_000);
    await waitForPort(S.smtpPort);
    console.log(
      [
        '',
        '  Plumbline is running (local demo).',
        `  App and API   http://127.0.0.1:${S.httpPort}`,
        `  Health        http://127.0.0.1:${S.httpPort}/api/health`,
        `  Mail (fake)   http://127.0.0.1:${S.mailWebPort}   SMTP 127.0.0.1:${S.smtpPort}`,
        `  Database      postgres://127.0.0.1:${S.cluster.port}/${S.cluster.database}   (npm run db -- psql)`,
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

/**
 * Health of the three things the product cannot work without: database (and its schema),
 * job queue, and mail.
 */
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import type { HealthCheck, HealthResponse } from '../../shared/health';
import type { Mailer } from '../mail/mailer';
import { QUEUES } from '../queue/queues';
import { hasPendingMigrations, pingDatabase } from './health.repository';

const VERSION = process.env.npm_package_version ?? '0.1.0';

async function timed(fn: () => Promise<{ ok: boolean; detail: string }>): Promise<HealthCheck> {
  const t0 = performance.now();
  try {
    const r = await fn();
    return { ...r, latencyMs: Math.round((performance.now() - t0) * 10) / 10 };
  } catch (e) {
    return { ok: false, detail: e instanceof Error ? e.message : String(e), latencyMs: null };
  }
}

function withTimeout<T>(p: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: ReturnType<typeof setTimeout> | undefined;
  const timeout = new Promise<T>((_, rej) => {
    timer = setTimeout(() => rej(new Error(`${what} did not answer within ${ms} ms`)), ms);
  });
  return Promise.race([p, timeout]).finally(() => clearTimeout(timer));
}

/** Database: reachable, and every migration applied. */
export async function checkDatabase(ds: DataSource): Promise<HealthCheck> {
  return timed(async () => {
    if (!ds.isInitialized) return { ok: false, detail: 'not connected to PostgreSQL' };
    await withTimeout(pingDatabase(ds), 3000, 'PostgreSQL');
    const pending = await hasPendingMigrations(ds);
    if (pending) return { ok: false, detail: 'connected, but migrations are pending: run `npm run migration:run`' };
    return { ok: true, detail: 'connected; schema up to date' };
  });
}

/** Queue: pg-boss started here and its queues exist. */
export async function checkQueue(boss: PgBoss | null): Promise<HealthCheck> {
  return timed(async () => {
    if (!boss) return { ok: false, detail: 'job queue not started in this server' };
    const q = await withTimeout(boss.getQueue(QUEUES.scoreBatch), 3000, 'pg-boss');
    if (!q) return { ok: false, detail: `queue "${QUEUES.scoreBatch}" is missing` };
    const waiting = await boss.getQueueSize(QUEUES.scoreBatch);
    return { ok: true, detail: `queue ready; ${waiting} scoring job${waiting === 1 ? '' : 's'} waiting` };
  });
}

/** Everything, as the shared HealthResponse. */
export async function getHealth(deps: { dataSource: DataSource; boss: PgBoss | null; mailer: Mailer }): Promise<HealthResponse> {
  const [database, queue, mail] = await Promise.all([
    checkDatabase(deps.dataSource),
    checkQueue(deps.boss),
    timed(() => withTimeout(deps.mailer.check(), 4000, 'SMTP server')),
  ]);
  const ok = database.ok && queue.ok && mail.ok;
  return { status: ok ? 'ok' : 'degraded', version: VERSION, time: new Date().toISOString(), checks: { database, queue, mail } };
}

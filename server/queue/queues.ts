/**
 * The job queue (pg-boss 10 in the application database, schema `pgboss`).
 * pg-boss 10 needs a queue to exist before `send`: a send to a missing queue returns null,
 * so every process calls {@link ensureQueues} right after `start()`.
 */
import PgBoss from 'pg-boss';

/** Queue names, one place. */
export const QUEUES = {
  /** Score every return of one accepted filing batch: data {batchId}. */
  scoreBatch: 'score-batch',
  /** Score one slice of a batch's returns: data {runId, fromId, toId}. Any worker may take it. */
  scoreChunk: 'score-chunk',
  /** The daily pass (issue 13): scheduled once a day at HOUSEKEEPING_HOUR; no data. */
  dailyPass: 'daily-pass',
} as const;
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES];

/** Creates (does not start) a pg-boss instance for this database. */
export function createBoss(url: string, role: 'server' | 'worker'): PgBoss {
  return new PgBoss({
    connectionString: url,
    schema: 'pgboss',
    application_name: `plumbline-${role}`,
    // Only the worker runs maintenance; the server just sends and reads.
    supervise: role === 'worker',
    schedule: role === 'worker',
    max: role === 'worker' ? 6 : 3,
    // How often the worker looks for jobs whose worker died (expired) and retries them.
    // QUEUE_MAINTENANCE_SECONDS lets tests shorten the wait; pg-boss's own default is 120 s.
    ...(role === 'worker' ? { maintenanceIntervalSeconds: Number(process.env.QUEUE_MAINTENANCE_SECONDS ?? 30) } : {}),
  });
}

/** Creates every queue if missing (idempotent). */
export async function ensureQueues(boss: PgBoss): Promise<void> {
  for (const name of Object.values(QUEUES)) {
    const existing = await boss.getQueue(name);
    if (!existing) {
      // retryLimit: a batch job that fails (e.g. the worker was killed) is retried; the
      // scoring job is idempotent, so a retry finishes the work and scores nothing twice.
      // A chunk takes about a second; two minutes without an answer means its worker died.
      const expireInSeconds = name === QUEUES.scoreChunk ? 120 : 15 * 60;
      await boss.createQueue(name, { name, retryLimit: 5, retryDelay: 2, retryBackoff: true, expireInSeconds });
    }
  }
}

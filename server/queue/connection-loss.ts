/**
 * Keeps the worker alive while PostgreSQL is away (docs/operations.md#when-postgresql-goes-away).
 *
 * pg-boss 10.4 records a job's end without awaiting it (`this.complete(...)` and
 * `this.fail(...)` in its manager's fetch loop), so when the database goes away in the middle
 * of a job, that write rejects with nobody listening and Node ends the process. The job itself
 * is safe: it stays active, expires and is retried, and every job here is idempotent. So a
 * rejection that only says "the database connection is gone" is logged and the worker carries
 * on; anything else still ends the process as Node would (the supervisor restarts it).
 */

/**
 * SQLSTATE codes that mean the connection, not the statement, failed: class 08 (connection
 * exception) and 57P01–57P03 (admin shutdown, crash shutdown, cannot connect now). Source:
 * PostgreSQL documentation, Appendix A "PostgreSQL Error Codes".
 */
const CONNECTION_SQLSTATE = /^(08\d{3}|57P0[123])$/;

/** Node's socket errors when the server is not there or went away. */
const SOCKET_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH']);

/** node-postgres's own words when a connection ends under a query (pg's client.js). */
const PG_CLIENT_MESSAGES =
  /^(Connection terminated( unexpectedly| due to connection timeout)?|Client has encountered a connection error and is not queryable)$/;

/** True when `err` says the database connection was lost or refused, not that a statement was wrong. */
export function isConnectionLoss(err: unknown): boolean {
  if (!err || typeof err !== 'object') return false;
  const e = err as { code?: unknown; message?: unknown; errors?: unknown };
  if (typeof e.code === 'string' && (CONNECTION_SQLSTATE.test(e.code) || SOCKET_CODES.has(e.code))) return true;
  if (typeof e.message === 'string' && PG_CLIENT_MESSAGES.test(e.message)) return true;
  // AggregateError from a connect that tried several addresses.
  return Array.isArray(e.errors) && e.errors.length > 0 && e.errors.every(isConnectionLoss);
}

/**
 * Installs the process-wide handler: connection-loss rejections are logged with `label` and
 * survived; any other unhandled rejection is printed and ends the process with exit code 1.
 */
export function surviveConnectionLoss(label: string, log: (line: string) => void = console.error): void {
  process.on('unhandledRejection', (reason) => {
    if (isConnectionLoss(reason)) {
      log(
        `[${label}] database connection lost while a job was ending (${String((reason as Error).message ?? reason)}); the job will be retried when it expires`,
      );
      return;
    }
    log(`[${label}] unhandled rejection: ${reason instanceof Error ? (reason.stack ?? reason.message) : String(reason)}`);
    process.exit(1);
  });
}

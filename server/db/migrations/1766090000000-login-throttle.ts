import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The sign-in throttle's counts in PostgreSQL (issue 16), so they hold across several server
 * processes and restarts (docs/operations.md#several-server-processes):
 * - key: "u:<user name, lower case>" or "a:<client address>";
 * - points: failed (or not yet finished) sign-ins in the current window;
 * - expire: when the window ends, in milliseconds since 1970 by the office clock (null: never).
 * The layout is rate-limiter-flexible's own for PostgreSQL; the application role gets its
 * rows through the schema's default privileges (server/db/roles.ts).
 */
export class LoginThrottle1766090000000 implements MigrationInterface {
  name = 'LoginThrottle1766090000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE login_throttle (
        key text PRIMARY KEY,
        points integer NOT NULL DEFAULT 0,
        expire bigint
      )`);
    await q.query(`CREATE INDEX idx_login_throttle_expire ON login_throttle (expire)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE login_throttle`);
  }
}

/**
 * What the application is built from. Its own module so feature routers can name the parts
 * they use (`Pick<AppDeps, 'dataSource'>`) without importing server/app.ts, which only the
 * entry points (server/main.ts, scripts) and tests import.
 */
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import type { LoginThrottle } from './auth/throttle';
import type { Config } from './config';
import type { Mailer } from './mail/mailer';

/** Every piece is created by the caller (main or a test). */
export interface AppDeps {
  config: Config;
  dataSource: DataSource;
  boss: PgBoss | null;
  mailer: Mailer;
  /** Sign-in throttle; tests pass their own to control time. */
  throttle?: LoginThrottle;
}

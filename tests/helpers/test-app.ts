/**
 * The real application against a fresh test database, the real pg-boss and the test MailDev.
 */
import 'reflect-metadata';
import type { Express } from 'express';
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import { createApp } from '../../server/app';
import { loadConfig, type Config } from '../../server/config';
import { createDataSource } from '../../server/db/data-source';
import { createMailer, type Mailer } from '../../server/mail/mailer';
import { createBoss, ensureQueues } from '../../server/queue/queues';
import { createTestDatabase, type TestDatabase } from './test-db';

/** Everything a test needs, and one call to tear it down. */
export interface TestContext {
  app: Express;
  config: Config;
  db: TestDatabase;
  dataSource: DataSource;
  boss: PgBoss;
  mailer: Mailer;
  close(): Promise<void>;
}

/** Test-wide config: the given database, the test SMTP port. */
export function testConfig(databaseUrl: string, overrides: Record<string, string> = {}): Config {
  return loadConfig({
    DATABASE_URL: databaseUrl,
    SMTP_PORT: process.env.PLUMBLINE_TEST_SMTP_PORT ?? '1026',
    NODE_ENV: 'test',
    SESSION_SECRET: 'test-secret-test-secret-test-secret',
    ...overrides,
  });
}

/** Builds the app on a fresh database. */
export async function createTestContext(overrides: Record<string, string> = {}): Promise<TestContext> {
  const db = await createTestDatabase();
  const config = testConfig(db.url, overrides);
  const dataSource = createDataSource(db.url, { poolSize: 4 });
  await dataSource.initialize();
  const boss = createBoss(db.url, 'server');
  await boss.start();
  await ensureQueues(boss);
  const mailer = createMailer(config);
  const app = createApp({ config, dataSource, boss, mailer });
  return {
    app,
    config,
    db,
    dataSource,
    boss,
    mailer,
    async close() {
      mailer.close();
      // Dropping the database ends any connection pg-boss still holds; its 'error' event then
      // has nobody to tell and would fail the suite after every test passed.
      boss.on('error', () => undefined);
      await boss.stop({ graceful: false, wait: true }).catch(() => undefined);
      if (dataSource.isInitialized) await dataSource.destroy();
      await db.drop();
    },
  };
}

/**
 * Readies one application database on a local cluster, the same way for start, test and
 * benchmarks: owner set-up (as the superuser), migrations and pg-boss's schema and queues
 * (as the owner), then the application's grants. The server and worker then log in as the
 * application role only (server/db/roles.ts).
 */
import 'reflect-metadata';
import type { DataSource } from 'typeorm';
import { createDataSource, runMigrations } from '../../server/db/data-source';
import { createBoss, ensureQueues } from '../../server/queue/queues';
import { connectionString, grantApplication, prepareOwnership, type ClusterSpec } from './pg';

/** What {@link prepareAppDatabase} did and where to connect. */
export interface PreparedDatabase {
  /** Migrations applied now (empty when the schema was up to date). */
  applied: string[];
  /** The owner's connection string (migrations, seeding, set-up). */
  ownerUrl: string;
  /** The application's connection string (server, worker, tests of the product). */
  appUrl: string;
}

/**
 * Prepares `database` (which must exist). `beforeGrants` runs as the owner after the
 * migrations, e.g. to seed demo data.
 */
export async function prepareAppDatabase(
  spec: ClusterSpec,
  database = spec.database,
  beforeGrants?: (ds: DataSource) => Promise<void>,
): Promise<PreparedDatabase> {
  await prepareOwnership(spec, database);
  const ownerUrl = connectionString(spec, database, 'owner');
  const ds = createDataSource(ownerUrl, { poolSize: 2, applicationName: 'plumbline-setup' });
  await ds.initialize();
  let applied: string[];
  try {
    applied = await runMigrations(ds);
    if (beforeGrants) await beforeGrants(ds);
  } finally {
    await ds.destroy();
  }
  // pg-boss installs or upgrades its schema and creates queues here, as the owner: the
  // application role may use the queues but not change their tables.
  const boss = createBoss(ownerUrl, 'server');
  await boss.start();
  await ensureQueues(boss);
  await boss.stop({ graceful: false, wait: true });
  await grantApplication(spec, database);
  return { applied, ownerUrl, appUrl: connectionString(spec, database, 'app') };
}

/**
 * A throw-away, migrated database on the start command's PostgreSQL for benchmarks. Starts
 * the cluster if needed and tells the caller whether to stop it afterwards.
 */
import 'reflect-metadata';
import type { DataSource } from 'typeorm';
import { createDataSource } from '../../server/db/data-source';
import { User } from '../../server/users/user.entity';
import { startSetup } from './local-services';
import { prepareAppDatabase } from './app-database';
import { findPgBin, isReady, recreateDatabase, startCluster, stopCluster } from './pg';

/** An open benchmark database. */
export interface BenchDb {
  /** The application role's connection string (for servers and workers). */
  url: string;
  /** `ds` is the owner's connection (set-up, checks). */
  ds: DataSource;
  clerkId: string;
  close(): Promise<void>;
}

let startedHere = false;

/** Starts the cluster (once per process) and makes a fresh migrated database `name`. */
export async function freshBenchDb(name: string): Promise<BenchDb> {
  const spec = startSetup.cluster;
  const bin = findPgBin();
  if (!(bin && isReady(bin, spec))) {
    await startCluster(spec, (m) => console.log(`bench  | ${m}`));
    startedHere = true;
  }
  await recreateDatabase(spec, name);
  const { ownerUrl, appUrl: url } = await prepareAppDatabase(spec, name);
  const ds = createDataSource(ownerUrl, { poolSize: 6, applicationName: 'plumbline-bench' });
  await ds.initialize();
  const clerk = await ds.getRepository(User).save({ username: 'bench-clerk', displayName: 'Bench clerk', role: 'clerk' as const, active: true });
  return { url, ds, clerkId: clerk.id, close: () => ds.destroy() };
}

/** Stops the cluster if this process started it. */
export function releaseBenchCluster(): void {
  if (startedHere) stopCluster(startSetup.cluster, (m) => console.log(`bench  | ${m}`));
}

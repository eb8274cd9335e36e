/**
 * A real server process on a fresh database that holds the demo accounts, for browser tests.
 * Optionally also a scored Aldermere batch (cases to work), loaded as the case API tests
 * load it.
 */
import type { GenerateOptions } from '../../shared/demo/aldermere';
import { createDataSource } from '../../server/db/data-source';
import { seedDemoAccounts } from '../../server/seed/demo-seed';
import { startServer, type RunningProcess } from './processes';
import { loadScoredBatch, type LoadedBatch } from './scored-batch';
import { createTestDatabase, type TestDatabase } from './test-db';

/** A running seeded server, its database, and how to stop both. */
export interface SeededServer {
  db: TestDatabase;
  server: RunningProcess & { baseUrl: string };
  /** The scored batch, when one was asked for. */
  batch: LoadedBatch | null;
  close(): Promise<void>;
}

/** What to put in the database besides the demo accounts. */
export interface SeedOptions {
  /** Load and score a generated batch (opens cases at the profile's cut). */
  scoredBatch?: GenerateOptions;
}

/**
 * Starts the real server on a fresh database with the demo accounts (and, if asked, a scored
 * batch). Called with no options it does what it always did.
 */
export async function startSeededServer(opts: SeedOptions = {}): Promise<SeededServer> {
  const db = await createTestDatabase();
  const ds = createDataSource(db.url, { poolSize: 2 });
  await ds.initialize();
  let batch: LoadedBatch | null = null;
  try {
    await seedDemoAccounts(ds);
    if (opts.scoredBatch) batch = await loadScoredBatch(ds, opts.scoredBatch);
  } finally {
    await ds.destroy();
  }
  const server = await startServer(db.url);
  return {
    db,
    server,
    batch,
    async close() {
      await server.stop();
      await db.drop();
    },
  };
}

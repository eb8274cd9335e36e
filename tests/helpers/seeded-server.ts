/**
 * A real server process on a fresh database that holds the demo accounts, for browser tests.
 */
import { createDataSource } from '../../server/db/data-source';
import { seedDemoAccounts } from '../../server/seed/demo-seed';
import { startServer, type RunningProcess } from './processes';
import { createTestDatabase, type TestDatabase } from './test-db';

export interface SeededServer {
  db: TestDatabase;
  server: RunningProcess & { baseUrl: string };
  close(): Promise<void>;
}

export async function startSeededServer(): Promise<SeededServer> {
  const db = await createTestDatabase();
  const ds = createDataSource(db.url, { poolSize: 1 });
  await ds.initialize();
  await seedDemoAccounts(ds);
  await ds.destroy();
  const server = await startServer(db.url);
  return {
    db,
    server,
    async close() {
      await server.stop();
      await db.drop();
    },
  };
}

/**
 * A PostgreSQL cluster of one test's own: a new data folder under a temporary folder and a
 * free port, with the test cluster's logins. For tests that stop PostgreSQL or need a cluster
 * that is empty, which must not disturb the shared test cluster other files use.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { startCluster, stopCluster, type ClusterSpec } from '../../scripts/lib/pg';
import { freePort } from './processes';
import { testCluster } from './test-db';

/** A started private cluster. */
export interface PrivateCluster {
  spec: ClusterSpec;
  /** Stops the cluster and removes its data folder. */
  remove(): void;
}

/**
 * Creates and starts a private cluster whose application database is `database` (created
 * empty, owned by the owner role, as `npm start` makes its own).
 */
export async function startPrivateCluster(database: string): Promise<PrivateCluster> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-cluster-'));
  const { user, password, owner, app } = testCluster();
  const spec: ClusterSpec = { dataDir: path.join(dir, 'data'), port: await freePort(), database, user, password, owner, app };
  const remove = () => {
    stopCluster(spec, () => undefined);
    fs.rmSync(dir, { recursive: true, force: true });
  };
  try {
    await startCluster(spec, () => undefined);
  } catch (e) {
    remove();
    throw e;
  }
  return { spec, remove };
}

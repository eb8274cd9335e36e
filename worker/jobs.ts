/**
 * Registers every job handler. Handlers reuse server services; each is idempotent.
 */
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import type { Config } from '../server/config';

/** What a job handler may use. */
export interface WorkerDeps {
  boss: PgBoss;
  dataSource: DataSource;
  config: Config;
}

/** Wires handlers to queues. The scoring job arrives with the scoring worker issue. */
export async function registerJobs(_deps: WorkerDeps): Promise<void> {
  // Intentionally empty until the scoring job exists: jobs stay queued, nothing is lost.
}

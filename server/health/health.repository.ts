/**
 * The health check's questions to PostgreSQL: does it answer, and is the schema up to date.
 * Kept here so the health service holds no SQL of its own (DEVELOPERS.md, "Layout").
 */
import type { DataSource } from 'typeorm';

/** One round trip to the database; rejects when it cannot be reached. */
export async function pingDatabase(ds: DataSource): Promise<void> {
  await ds.query('SELECT 1');
}

/** True when a registered migration has not been applied to this database. */
export function hasPendingMigrations(ds: DataSource): Promise<boolean> {
  return ds.showMigrations();
}

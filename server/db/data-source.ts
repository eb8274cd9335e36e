import 'reflect-metadata';
import { DataSource } from 'typeorm';
import { entities } from './entities';
import { migrations } from './migrations';

/**
 * Builds the TypeORM data source. Schema changes only through migrations: `synchronize`
 * stays off everywhere (docs/design.md#data-model).
 */
export function createDataSource(url: string, opts: { poolSize?: number; applicationName?: string } = {}): DataSource {
  return new DataSource({
    type: 'postgres',
    url,
    entities,
    migrations,
    synchronize: false,
    migrationsRun: false,
    logging: ['error'],
    poolSize: opts.poolSize ?? 10,
    applicationName: opts.applicationName ?? 'plumbline',
  });
}

/** Applies pending migrations in one transaction and returns their names. */
export async function runMigrations(ds: DataSource): Promise<string[]> {
  const done = await ds.runMigrations({ transaction: 'all' });
  return done.map((m) => m.name);
}

/** `npm run migration:run`: applies pending migrations to DATABASE_URL. */
import { loadConfig } from '../config';
import { createDataSource, runMigrations } from './data-source';

async function main() {
  const config = loadConfig();
  const ds = createDataSource(config.DATABASE_URL);
  await ds.initialize();
  try {
    const names = await runMigrations(ds);
    console.log(names.length ? `Applied: ${names.join(', ')}` : 'Schema is up to date.');
  } finally {
    await ds.destroy();
  }
}

main().catch((e) => {
  console.error(e instanceof Error ? e.message : e);
  process.exit(1);
});

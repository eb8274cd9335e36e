/**
 * Database lifecycle for the local cluster:
 * `npm run db -- start|stop|status|psql|reset|backup FILE|restore FILE|detach-year YEAR [--test] [--database NAME]`.
 * `--test` acts on the test cluster instead of the start command's; `--database` names another
 * database on it than the application's (docs/operations.md#backup-and-restore);
 * `detach-year` archives a tax year's partitions (docs/operations.md#archiving-a-tax-year).
 */
import { BackupInputError, backupDatabase, restoreDatabase } from './lib/backup';
import { clusterStatus, connectionString, destroyCluster, psql, startCluster, stopCluster } from './lib/pg';
import { createDataSource } from '../server/db/data-source';
import { DetachYearRefused, detachYear } from '../server/returns/year-partitions.repository';
import { startSetup, testSetup } from './lib/local-services';

const USAGE = 'Usage: npm run db -- start|stop|status|psql|reset|backup FILE|restore FILE|detach-year YEAR [--test] [--database NAME]';

/** Reads `--database NAME` out of the arguments. */
function takeDatabase(args: string[]): { database?: string; rest: string[] } {
  const i = args.indexOf('--database');
  if (i < 0) return { rest: args };
  const database = args[i + 1];
  if (!database || !/^[a-z_][a-z0-9_]{0,62}$/.test(database)) {
    throw new BackupInputError('--database needs a database name of lower-case letters, digits and _ (e.g. --database plumbline_restored).');
  }
  return { database, rest: [...args.slice(0, i), ...args.slice(i + 2)] };
}

async function main(): Promise<number> {
  const args = process.argv.slice(2);
  const useTest = args.includes('--test');
  const picked = takeDatabase(args.filter((a) => a !== '--test'));
  const [cmd, ...more] = picked.rest;
  const spec = (useTest ? testSetup : startSetup).cluster;
  const database = picked.database ?? spec.database;
  switch (cmd) {
    case 'start':
      await startCluster(spec);
      console.log(clusterStatus(spec));
      return 0;
    case 'stop':
      stopCluster(spec);
      console.log(clusterStatus(spec));
      return 0;
    case 'status':
      console.log(clusterStatus(spec));
      return 0;
    case 'psql':
      await startCluster(spec, () => undefined);
      return psql(spec, more);
    case 'reset':
      destroyCluster(spec);
      await startCluster(spec);
      console.log('Database reset: empty cluster; migrations run on the next `npm start`.');
      return 0;
    case 'backup': {
      if (more.length !== 1) throw new BackupInputError(`backup needs one file name.\n${USAGE}`);
      await startCluster(spec, () => undefined);
      const r = backupDatabase(spec, database, more[0]);
      console.log(`Backup of "${database}" written to ${r.file} (${(r.bytes / 1e6).toFixed(1)} MB in ${r.seconds.toFixed(1)} s).`);
      return 0;
    }
    case 'restore': {
      if (more.length !== 1) throw new BackupInputError(`restore needs one file name.\n${USAGE}`);
      await startCluster(spec, () => undefined);
      const r = await restoreDatabase(spec, database, more[0]);
      console.log(`Restored ${r.file} into "${database}" in ${r.seconds.toFixed(1)} s. Start the product as usual; migrations newer than the backup run then.`);
      return 0;
    }
    case 'detach-year': {
      if (more.length !== 1 || !/^\d{4}$/.test(more[0]))
        throw new BackupInputError(`detach-year needs one four-digit tax year, e.g. detach-year 2016.\n${USAGE}`);
      await startCluster(spec, () => undefined);
      const ds = createDataSource(connectionString(spec, database, 'owner'), { poolSize: 1, applicationName: 'plumbline-db' });
      await ds.initialize();
      try {
        const r = await detachYear(ds, Number(more[0]));
        for (const t of r.tables) console.log(`Detached ${t.table} (${t.rows.toLocaleString('en-GB')} rows).`);
        console.log(`Tax year ${r.year} is out of line_item and return_score. Dump the tables with pg_dump --table, then DROP them (docs/operations.md).`);
      } catch (e) {
        if (e instanceof DetachYearRefused) throw new BackupInputError(e.message);
        throw e;
      } finally {
        await ds.destroy();
      }
      return 0;
    }
    default:
      console.error(USAGE);
      return 2;
  }
}

main().then(
  (code) => process.exit(code),
  (err) => {
    console.error(`db: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(err instanceof BackupInputError ? 2 : 1);
  },
);

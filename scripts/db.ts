/**
 * Database lifecycle for the local cluster:
 * `npm run db -- start|stop|status|psql|reset|backup FILE|restore FILE [--test] [--database NAME]`.
 * `--test` acts on the test cluster instead of the start command's; `--database` names another
 * database on it than the application's (docs/operations.md#backup-and-restore).
 */
import { BackupInputError, backupDatabase, restoreDatabase } from './lib/backup';
import { clusterStatus, destroyCluster, psql, startCluster, stopCluster } from './lib/pg';
import { startSetup, testSetup } from './lib/local-services';

const USAGE = 'Usage: npm run db -- start|stop|status|psql|reset|backup FILE|restore FILE [--test] [--database NAME]';

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

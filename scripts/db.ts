/**
 * Database lifecycle for the local cluster: `npm run db -- start|stop|status|psql|reset [--test]`.
 * `--test` acts on the test cluster instead of the start command's.
 */
import { clusterStatus, destroyCluster, psql, startCluster, stopCluster } from './lib/pg';
import { startSetup, testSetup } from './lib/local-services';

async function main(): Promise<number> {
  const args = process.argv.slice(2);
  const useTest = args.includes('--test');
  const rest = args.filter((a) => a !== '--test');
  const [cmd, ...more] = rest;
  const spec = (useTest ? testSetup : startSetup).cluster;
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
    default:
      console.error('Usage: npm run db -- start|stop|status|psql|reset [--test]');
      return 2;
  }
}

main().then(
  (code) => process.exit(code),
  (err) => {
    console.error(`db: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(1);
  },
);

/**
 * Backup and restore of one application database with PostgreSQL's own tools from Debian's
 * packages: `pg_dump --format=custom` and `pg_restore` (docs/operations.md#backup-and-restore).
 *
 * A backup is written to a temporary file beside the target and renamed only when pg_dump
 * has finished, so a failed backup never leaves a file that looks whole. A restore goes
 * into an empty database only, in one transaction, so a failed restore leaves nothing behind;
 * the owner and application grants are then set up exactly as on a fresh start.
 */
import fs from 'node:fs';
import path from 'node:path';
import { clientTool, ensureDatabase, grantApplication, prepareOwnership, withClient, type ClusterSpec } from './pg';

/** The first bytes of every custom-format archive pg_dump writes (pg_backup_archiver.c). */
const CUSTOM_FORMAT_MAGIC = 'PGDMP';

/** A refusal the command line reports as a usage error (exit 2), with what to do. */
export class BackupInputError extends Error {}

/** What a backup or restore did. */
export interface BackupResult {
  file: string;
  bytes: number;
  seconds: number;
}

/**
 * Writes `database` to `file` in pg_dump's custom format (compressed, restorable table by
 * table). Refuses a file that already exists rather than overwrite an older backup.
 */
export function backupDatabase(spec: ClusterSpec, database: string, file: string): BackupResult {
  const target = path.resolve(file);
  const dir = path.dirname(target);
  if (!fs.existsSync(dir) || !fs.statSync(dir).isDirectory()) {
    throw new BackupInputError(`Backup: the folder ${dir} does not exist. Create it, or give a file path in an existing folder.`);
  }
  if (fs.existsSync(target)) {
    throw new BackupInputError(`Backup: ${target} already exists. Give a new file name; an older backup is never overwritten.`);
  }
  const partial = `${target}.partial-${process.pid}`;
  const t0 = Date.now();
  try {
    const r = clientTool(spec, 'pg_dump', ['--format=custom', '--compress=6', '--file', partial, database]);
    if (r.status !== 0) throw new Error(`pg_dump of database "${database}" failed (exit ${r.status}):\n${r.stderr.trim()}`);
    fs.renameSync(partial, target);
  } finally {
    fs.rmSync(partial, { force: true });
  }
  return { file: target, bytes: fs.statSync(target).size, seconds: (Date.now() - t0) / 1000 };
}

/** Throws unless `file` is a readable custom-format archive. */
function checkArchive(file: string): string {
  const source = path.resolve(file);
  if (!fs.existsSync(source) || !fs.statSync(source).isFile()) {
    throw new BackupInputError(`Restore: ${source} is not a file. Give the path of a backup written by \`npm run db -- backup FILE\`.`);
  }
  const head = Buffer.alloc(CUSTOM_FORMAT_MAGIC.length);
  const fd = fs.openSync(source, 'r');
  try {
    fs.readSync(fd, head, 0, head.length, 0);
  } finally {
    fs.closeSync(fd);
  }
  if (head.toString('latin1') !== CUSTOM_FORMAT_MAGIC) {
    throw new BackupInputError(
      `Restore: ${source} is not a PostgreSQL custom-format backup (it does not start with "${CUSTOM_FORMAT_MAGIC}"). Give a file written by \`npm run db -- backup FILE\`.`,
    );
  }
  return source;
}

/** Tables and other relations the database already holds in the application's schemas. */
async function relationsIn(spec: ClusterSpec, database: string): Promise<number> {
  return withClient(spec, database, 'owner', async (c) => {
    const r = await c.query(
      `SELECT count(*)::int AS n FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
       WHERE n.nspname IN ('public', 'pgboss') AND c.relkind IN ('r', 'p', 'v', 'm', 'S')`,
    );
    return (r.rows[0] as { n: number }).n;
  });
}

/**
 * Restores `file` into `database`, which must be empty (a new cluster after
 * `npm run db -- reset`, or a database just created). Runs in one transaction: on any error
 * nothing is restored. Then sets ownership and the application's grants as a fresh start does.
 */
export async function restoreDatabase(spec: ClusterSpec, database: string, file: string): Promise<BackupResult> {
  const source = checkArchive(file);
  await ensureDatabase(spec, database);
  const existing = await relationsIn(spec, database);
  if (existing > 0) {
    throw new BackupInputError(
      `Restore: database "${database}" already holds ${existing} tables or sequences. A restore goes into an empty cluster: ` +
        'stop the product, run `npm run db -- reset` (this deletes the local data), then restore again.',
    );
  }
  const t0 = Date.now();
  // --no-owner/--no-privileges: the objects belong to whoever restores (the owner role), and
  // the application's grants are given below exactly as on a fresh start (server/db/roles.ts).
  const r = clientTool(spec, 'pg_restore', ['--dbname', database, '--no-owner', '--no-privileges', '--single-transaction', '--exit-on-error', source]);
  if (r.status !== 0) throw new Error(`pg_restore into database "${database}" failed (exit ${r.status}); nothing was restored:\n${r.stderr.trim()}`);
  await prepareOwnership(spec, database);
  await grantApplication(spec, database);
  return { file: source, bytes: fs.statSync(source).size, seconds: (Date.now() - t0) / 1000 };
}

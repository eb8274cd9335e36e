/**
 * Database roles (issue 12): three logins, each with only what it needs.
 *
 * - the cluster's superuser: creates databases and roles, nothing else;
 * - the owner: owns the database, its schemas and every table; runs migrations and installs
 *   pg-boss's schema and queues (`npm run db -- psql` opens its session);
 * - the application: what the server and the worker log in as. Not a superuser, owns
 *   nothing, reads and writes rows, and may only INSERT and SELECT on the append-only tables,
 *   so it cannot remove a line of the access log even by switching triggers off
 *   (`SET session_replication_role` and `ALTER TABLE … DISABLE TRIGGER` need a superuser or
 *   the table's owner).
 *
 * The SQL is built here, in one place, for the start and test commands (scripts/lib/pg.ts)
 * and for an office's own database (docs/operations.md shows the same statements).
 */

/** A login name and password. */
export interface DbLogin {
  user: string;
  password: string;
}

/** Tables whose rows are never changed or removed (each also has a refusing trigger). */
export const APPEND_ONLY_TABLES = ['access_log', 'case_note'] as const;

/** Schemas the application uses: ours and pg-boss's (server/queue/queues.ts). */
export const APP_SCHEMAS = ['public', 'pgboss'] as const;

/** A quoted SQL identifier. */
export function ident(name: string): string {
  return `"${name.replace(/"/g, '""')}"`;
}

/** A quoted SQL string literal. */
export function literal(text: string): string {
  return `'${text.replace(/'/g, "''")}'`;
}

/**
 * Statements (run by the superuser, connected to `postgres`) that create a login role if
 * it is missing. A parallel run creating the same role at the same moment is not an error.
 */
export function createLoginRoleSql(login: DbLogin): string {
  return `DO $$ BEGIN
    CREATE ROLE ${ident(login.user)} LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE NOREPLICATION NOBYPASSRLS PASSWORD ${literal(login.password)};
  EXCEPTION WHEN duplicate_object OR unique_violation THEN NULL;
  END $$`;
}

/** Makes an existing role an ordinary login with this password. */
export function alterLoginRoleSql(login: DbLogin): string {
  return `ALTER ROLE ${ident(login.user)} WITH LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE NOREPLICATION NOBYPASSRLS PASSWORD ${literal(login.password)}`;
}

/**
 * Statements (run by the superuser, connected to the application database) that hand the
 * database to the owner before migrations run: the database, its schemas, and any object
 * an earlier set-up created as the superuser; and the default privileges that grant the
 * application every table and sequence the owner creates later.
 */
export function ownerSetupSql(database: string, owner: string, app: string): string[] {
  const o = ident(owner);
  const a = ident(app);
  const schemas = APP_SCHEMAS.map(literal).join(', ');
  return [
    `ALTER DATABASE ${ident(database)} OWNER TO ${o}`,
    `ALTER SCHEMA public OWNER TO ${o}`,
    // pg-boss creates its schema only if missing; made here, it belongs to the owner.
    `CREATE SCHEMA IF NOT EXISTS pgboss AUTHORIZATION ${o}`,
    `ALTER SCHEMA pgboss OWNER TO ${o}`,
    // Objects made by an older set-up that ran migrations as the superuser.
    `DO $$ DECLARE r record; BEGIN
      FOR r IN
        SELECT n.nspname, c.relname, c.relkind FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
        WHERE n.nspname IN (${schemas}) AND c.relkind IN ('r', 'p', 'v', 'm', 'S', 'f')
          AND c.relowner <> ${literal(owner)}::regrole
          -- a sequence that belongs to a column follows its table
          AND NOT (c.relkind = 'S' AND EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_class'::regclass AND d.objid = c.oid AND d.deptype IN ('a', 'i')))
      LOOP
        EXECUTE format('ALTER %s %I.%I OWNER TO %I',
          CASE r.relkind WHEN 'S' THEN 'SEQUENCE' WHEN 'v' THEN 'VIEW' WHEN 'm' THEN 'MATERIALIZED VIEW' WHEN 'f' THEN 'FOREIGN TABLE' ELSE 'TABLE' END,
          r.nspname, r.relname, ${literal(owner)});
      END LOOP;
      FOR r IN
        SELECT p.oid::regprocedure AS sig, p.prokind FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace
        WHERE n.nspname IN (${schemas}) AND p.proowner <> ${literal(owner)}::regrole
          AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_proc'::regclass AND d.objid = p.oid AND d.deptype = 'e')
      LOOP
        EXECUTE format('ALTER %s %s OWNER TO %I', CASE r.prokind WHEN 'p' THEN 'PROCEDURE' ELSE 'FUNCTION' END, r.sig, ${literal(owner)});
      END LOOP;
      FOR r IN
        SELECT t.oid::regtype AS typ, t.typtype FROM pg_type t JOIN pg_namespace n ON n.oid = t.typnamespace
        WHERE n.nspname IN (${schemas}) AND t.typtype IN ('e', 'd') AND t.typowner <> ${literal(owner)}::regrole
          AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_type'::regclass AND d.objid = t.oid AND d.deptype = 'e')
      LOOP
        EXECUTE format('ALTER %s %s OWNER TO %I', CASE r.typtype WHEN 'd' THEN 'DOMAIN' ELSE 'TYPE' END, r.typ, ${literal(owner)});
      END LOOP;
    END $$`,
    ...APP_SCHEMAS.flatMap((s) => [
      `ALTER DEFAULT PRIVILEGES FOR ROLE ${o} IN SCHEMA ${ident(s)} GRANT SELECT, INSERT, UPDATE, DELETE ON TABLES TO ${a}`,
      `ALTER DEFAULT PRIVILEGES FOR ROLE ${o} IN SCHEMA ${ident(s)} GRANT USAGE, SELECT, UPDATE ON SEQUENCES TO ${a}`,
    ]),
  ];
}

/**
 * Statements (run by the owner or the superuser, after migrations and pg-boss's install)
 * that grant the application its rows, and take back every change of the append-only
 * tables and of the migration record. Idempotent: run on every start.
 */
export function applicationGrantsSql(database: string, app: string): string[] {
  const a = ident(app);
  const schemas = APP_SCHEMAS.map(ident).join(', ');
  return [
    `GRANT CONNECT, TEMPORARY ON DATABASE ${ident(database)} TO ${a}`,
    `GRANT USAGE ON SCHEMA ${schemas} TO ${a}`,
    `GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA ${schemas} TO ${a}`,
    `GRANT USAGE, SELECT, UPDATE ON ALL SEQUENCES IN SCHEMA ${schemas} TO ${a}`,
    ...APPEND_ONLY_TABLES.map((t) => `REVOKE UPDATE, DELETE, TRUNCATE, REFERENCES, TRIGGER ON ${ident(t)} FROM ${a}, PUBLIC`),
    // Only migrations (the owner) record migrations.
    `REVOKE INSERT, UPDATE, DELETE, TRUNCATE ON migrations FROM ${a}, PUBLIC`,
    // Intake makes a new tax year's partitions through this owner's function, and nothing else
    // of the schema (docs/design.md#partitions-by-tax-year).
    `GRANT EXECUTE ON FUNCTION ensure_tax_year_partitions(smallint) TO ${a}`,
  ];
}

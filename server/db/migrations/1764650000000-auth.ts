import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Sessions (for express-session through connect-pg-simple, same layout as its table.sql)
 * and the append-only access log.
 */
export class Auth1764650000000 implements MigrationInterface {
  name = 'Auth1764650000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE user_session (
        sid varchar NOT NULL PRIMARY KEY,
        sess json NOT NULL,
        expire timestamp(6) NOT NULL
      )`);
    await q.query(`CREATE INDEX idx_user_session_expire ON user_session (expire)`);

    await q.query(`
      CREATE TABLE access_log (
        id bigserial PRIMARY KEY,
        at timestamptz NOT NULL DEFAULT now(),
        user_id uuid,
        username text,
        role text,
        action text NOT NULL,
        route text NOT NULL,
        record_type text,
        record_id text,
        taxpayer_id uuid,
        taxpayer_label text,
        detail text
      )`);
    await q.query(`CREATE INDEX idx_access_log_at ON access_log (at DESC)`);
    await q.query(`CREATE INDEX idx_access_log_user ON access_log (user_id, at DESC)`);
    await q.query(`CREATE INDEX idx_access_log_taxpayer ON access_log (taxpayer_id, at DESC)`);
    // Append-only: the database itself refuses to change or remove a row.
    await q.query(`
      CREATE FUNCTION access_log_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION 'access_log is append-only: rows cannot be changed or removed';
      END $$`);
    await q.query(`
      CREATE TRIGGER access_log_no_update_delete BEFORE UPDATE OR DELETE ON access_log
      FOR EACH ROW EXECUTE FUNCTION access_log_append_only()`);
    await q.query(`
      CREATE TRIGGER access_log_no_truncate BEFORE TRUNCATE ON access_log
      FOR EACH STATEMENT EXECUTE FUNCTION access_log_append_only()`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE access_log`);
    await q.query(`DROP FUNCTION access_log_append_only()`);
    await q.query(`DROP TABLE user_session`);
  }
}

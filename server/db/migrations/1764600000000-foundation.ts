import type { MigrationInterface, QueryRunner } from 'typeorm';

/** Staff accounts: the first table every other feature refers to. */
export class Foundation1764600000000 implements MigrationInterface {
  name = 'Foundation1764600000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE EXTENSION IF NOT EXISTS pgcrypto`);
    await q.query(`
      CREATE TABLE app_user (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        username text NOT NULL UNIQUE,
        display_name text NOT NULL,
        role text NOT NULL CHECK (role IN ('clerk','examiner','supervisor','admin')),
        password_hash text,
        active boolean NOT NULL DEFAULT true,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE app_user`);
  }
}

import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * My cases and saved views (issue 14):
 * - case_attention: per case, when a taxpayer's reply arrived that the case's examiner has
 *   not opened yet (reply_unread_since, set by the reply link, cleared when the examiner opens
 *   the case), and when the examiner last opened it (assignee_seen_at), against which
 *   "requests expired" and "handed to me" are read from case_event;
 * - saved_view: a person's named queue filters and order, restored after signing in again.
 */
export class MyCases1766040000000 implements MigrationInterface {
  name = 'MyCases1766040000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE case_attention (
        case_id uuid PRIMARY KEY REFERENCES exam_case (id) ON DELETE CASCADE,
        reply_unread_since timestamptz,
        assignee_seen_at timestamptz
      )`);
    // "Replies received" reads only the flagged cases.
    await q.query(`CREATE INDEX idx_case_attention_reply ON case_attention (case_id) WHERE reply_unread_since IS NOT NULL`);
    await q.query(`
      CREATE TABLE saved_view (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        user_id uuid NOT NULL REFERENCES app_user (id) ON DELETE CASCADE,
        name text NOT NULL CHECK (length(name) BETWEEN 1 AND 40),
        filters jsonb NOT NULL DEFAULT '{}'::jsonb,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    // One name once per person, whatever its case.
    await q.query(`CREATE UNIQUE INDEX idx_saved_view_user_name ON saved_view (user_id, lower(name))`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE saved_view`);
    await q.query(`DROP TABLE case_attention`);
  }
}

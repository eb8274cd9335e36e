import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Letters (issue 7): every letter made for a case (document requests and referral memos)
 * kept as its PDF; document requests with their one-time reply link (only the SHA-256 hash
 * of the token is stored, so a copy of the database cannot be used to answer for a
 * taxpayer); the files taxpayers send back.
 *
 * Replies are stored in the database (bytea), not on disk: they commit in the same
 * transaction as the request's state and the case's move, are covered by the same backups
 * and access rules, and the size limits (shared/letters.ts) keep them small.
 */
export class Letters1764900000000 implements MigrationInterface {
  name = 'Letters1764900000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE letter (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        case_id uuid NOT NULL REFERENCES exam_case (id),
        kind text NOT NULL CHECK (kind IN ('document_request', 'referral_memo')),
        file_name text NOT NULL,
        pdf bytea NOT NULL,
        size integer NOT NULL CHECK (size > 0),
        sha256 char(64) NOT NULL,
        sent_sha256 char(64),
        recipient text NOT NULL,
        subject text NOT NULL,
        message_id text,
        created_by uuid REFERENCES app_user (id),
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE INDEX idx_letter_case ON letter (case_id, created_at DESC)`);
    await q.query(
      `COMMENT ON COLUMN letter.pdf IS 'The office copy. For a document request the reply token is masked in it; sent_sha256 is the hash of the PDF as mailed.'`,
    );

    await q.query(`
      CREATE TABLE document_request (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        case_id uuid NOT NULL REFERENCES exam_case (id),
        letter_id uuid NOT NULL UNIQUE REFERENCES letter (id),
        items jsonb NOT NULL CHECK (jsonb_typeof(items) = 'array' AND jsonb_array_length(items) > 0),
        due_date date NOT NULL,
        token_hash char(64) NOT NULL UNIQUE,
        state text NOT NULL DEFAULT 'sent' CHECK (state IN ('sent', 'answered', 'expired')),
        email text NOT NULL,
        created_at timestamptz NOT NULL DEFAULT now(),
        answered_at timestamptz,
        CHECK ((state = 'answered') = (answered_at IS NOT NULL))
      )`);
    await q.query(`CREATE INDEX idx_document_request_case ON document_request (case_id)`);

    await q.query(`
      CREATE TABLE reply_upload (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        document_request_id uuid NOT NULL REFERENCES document_request (id),
        file_name text NOT NULL,
        content_type text NOT NULL CHECK (content_type IN ('application/pdf', 'image/jpeg', 'image/png')),
        size integer NOT NULL CHECK (size > 0),
        sha256 char(64) NOT NULL,
        content bytea NOT NULL,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE INDEX idx_reply_upload_request ON reply_upload (document_request_id)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE reply_upload`);
    await q.query(`DROP TABLE document_request`);
    await q.query(`DROP TABLE letter`);
  }
}

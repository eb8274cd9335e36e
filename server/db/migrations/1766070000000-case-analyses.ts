import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Digit analyses kept with the case as working papers (issue 15), and replies that carry
 * records as data:
 * - case_analysis: one saved analysis (its source, the column read, the result JSON of
 *   `npm run digits -- --json`, the source file's name and SHA-256, who ran it and when).
 *   A working paper is part of the case's record, so the database refuses UPDATE, DELETE and
 *   TRUNCATE, as it does for case notes;
 * - reply_upload.content_type also allows CSV and XLSX (server/letters/reply-files.ts).
 */
export class CaseAnalyses1766070000000 implements MigrationInterface {
  name = 'CaseAnalyses1766070000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE case_analysis (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        case_id uuid NOT NULL REFERENCES exam_case (id),
        created_by uuid NOT NULL REFERENCES app_user (id),
        created_at timestamptz NOT NULL DEFAULT now(),
        source jsonb NOT NULL,
        source_label text NOT NULL,
        file_name text,
        sha256 char(64),
        amount_column text,
        split_column text,
        what text NOT NULL,
        result jsonb NOT NULL
      )`);
    await q.query(`CREATE INDEX idx_case_analysis_case ON case_analysis (case_id, created_at)`);
    await q.query(`
      CREATE FUNCTION case_analysis_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION 'case_analysis is immutable: a saved analysis cannot be changed or removed; run a new one instead';
      END $$`);
    await q.query(`
      CREATE TRIGGER case_analysis_no_update_delete BEFORE UPDATE OR DELETE ON case_analysis
      FOR EACH ROW EXECUTE FUNCTION case_analysis_immutable()`);
    await q.query(`
      CREATE TRIGGER case_analysis_no_truncate BEFORE TRUNCATE ON case_analysis
      FOR EACH STATEMENT EXECUTE FUNCTION case_analysis_immutable()`);
    await q.query(`ALTER TABLE reply_upload DROP CONSTRAINT reply_upload_content_type_check`);
    await q.query(`
      ALTER TABLE reply_upload ADD CONSTRAINT reply_upload_content_type_check CHECK (content_type IN
        ('application/pdf', 'image/jpeg', 'image/png', 'text/csv', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'))`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE reply_upload DROP CONSTRAINT reply_upload_content_type_check`);
    await q.query(
      `ALTER TABLE reply_upload ADD CONSTRAINT reply_upload_content_type_check CHECK (content_type IN ('application/pdf', 'image/jpeg', 'image/png'))`,
    );
    await q.query(`DROP TABLE case_analysis`);
    await q.query(`DROP FUNCTION case_analysis_immutable()`);
  }
}

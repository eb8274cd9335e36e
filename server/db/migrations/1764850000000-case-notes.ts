import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Case work (issue 7): append-only case notes, and the indexes the examination queue needs
 * beyond those of the scoring migration.
 *
 * A note is part of the case's record: once written it is never edited or removed (a
 * correction is a new note), so the database itself refuses UPDATE, DELETE and TRUNCATE,
 * as it does for the access log.
 */
export class CaseNotes1764850000000 implements MigrationInterface {
  name = 'CaseNotes1764850000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE case_note (
        id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
        case_id uuid NOT NULL REFERENCES exam_case (id),
        author_id uuid NOT NULL REFERENCES app_user (id),
        at timestamptz NOT NULL DEFAULT now(),
        text text NOT NULL CHECK (length(btrim(text)) BETWEEN 1 AND 10000)
      )`);
    await q.query(`CREATE INDEX idx_case_note_case ON case_note (case_id, at)`);
    await q.query(`
      CREATE FUNCTION case_note_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION 'case_note is append-only: a note cannot be changed or removed; write a new note instead';
      END $$`);
    await q.query(`
      CREATE TRIGGER case_note_no_update_delete BEFORE UPDATE OR DELETE ON case_note
      FOR EACH ROW EXECUTE FUNCTION case_note_append_only()`);
    await q.query(`
      CREATE TRIGGER case_note_no_truncate BEFORE TRUNCATE ON case_note
      FOR EACH STATEMENT EXECUTE FUNCTION case_note_append_only()`);

    // The queue's "age" order (oldest first) walks this index instead of sorting every case.
    await q.query(`CREATE INDEX idx_case_opened ON exam_case (opened_at, id)`);
    // Searching the queue by return reference (any case, prefix match): without it the
    // search joins every case to its return.
    await q.query(`CREATE INDEX idx_tax_return_ref_upper ON tax_return (upper(return_ref) text_pattern_ops)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP INDEX idx_tax_return_ref_upper`);
    await q.query(`DROP INDEX idx_case_opened`);
    await q.query(`DROP TABLE case_note`);
    await q.query(`DROP FUNCTION case_note_append_only()`);
  }
}

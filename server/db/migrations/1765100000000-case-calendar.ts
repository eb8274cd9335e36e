import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The case calendar (issue 13):
 * - tax_return.filed_on: the date a return was filed (the batch's optional `filed_on`
 *   column; when absent, the date the batch was received counts);
 * - exam_case.assess_by / assess_basis: the assessment deadline by
 *   shared/returns/assessment-deadline.ts, kept on the case so the queue sorts and filters
 *   on it (idx_case_assess_by); filled for existing cases by the server at start-up and
 *   by scoring for new ones (server/cases/case-deadline.service.ts);
 * - document_request.reminded_at: the one reminder the daily pass sends per request;
 * - app_user.email: where an examiner's daily digest goes;
 * - housekeeping_run / housekeeping_digest: what the daily pass did on each office day, so
 *   a second run the same day does nothing new;
 * - letter kinds for the reminder and the closing letters.
 */
export class CaseCalendar1765100000000 implements MigrationInterface {
  name = 'CaseCalendar1765100000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE tax_return ADD COLUMN filed_on date`);
    await q.query(
      `ALTER TABLE exam_case ADD COLUMN assess_by date, ADD COLUMN assess_basis text CHECK (assess_basis IN ('standard', 'omitted-income', 'no-return'))`,
    );
    await q.query(`CREATE INDEX idx_case_assess_by ON exam_case (assess_by, id)`);
    await q.query(`ALTER TABLE document_request ADD COLUMN reminded_at timestamptz`);
    // Where an examiner's daily digest goes (null: username at STAFF_MAIL_DOMAIN).
    await q.query(`ALTER TABLE app_user ADD COLUMN email text`);
    await q.query(`ALTER TABLE letter DROP CONSTRAINT letter_kind_check`);
    await q.query(
      `ALTER TABLE letter ADD CONSTRAINT letter_kind_check CHECK (kind IN ('document_request', 'referral_memo', 'reminder', 'acknowledgement', 'no_change', 'adjustment_proposal'))`,
    );
    await q.query(`
      CREATE TABLE housekeeping_run (
        day date PRIMARY KEY,
        started_at timestamptz NOT NULL DEFAULT now(),
        finished_at timestamptz,
        result jsonb NOT NULL DEFAULT '{}'::jsonb
      )`);
    await q.query(`
      CREATE TABLE housekeeping_digest (
        day date NOT NULL,
        examiner_id uuid NOT NULL REFERENCES app_user (id),
        sent_at timestamptz NOT NULL DEFAULT now(),
        PRIMARY KEY (day, examiner_id)
      )`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE housekeeping_digest`);
    await q.query(`DROP TABLE housekeeping_run`);
    await q.query(`DELETE FROM letter WHERE kind NOT IN ('document_request', 'referral_memo')`);
    await q.query(`ALTER TABLE letter DROP CONSTRAINT letter_kind_check`);
    await q.query(`ALTER TABLE letter ADD CONSTRAINT letter_kind_check CHECK (kind IN ('document_request', 'referral_memo'))`);
    await q.query(`ALTER TABLE app_user DROP COLUMN email`);
    await q.query(`ALTER TABLE document_request DROP COLUMN reminded_at`);
    await q.query(`DROP INDEX idx_case_assess_by`);
    await q.query(`ALTER TABLE exam_case DROP COLUMN assess_by, DROP COLUMN assess_basis`);
    await q.query(`ALTER TABLE tax_return DROP COLUMN filed_on`);
  }
}

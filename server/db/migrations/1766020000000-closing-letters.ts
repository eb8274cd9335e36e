import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Letters that close the loop and records in parts (issue 13):
 * - case_correction: the corrected figures behind an adjustment proposal, one row per line
 *   code, beside the line's value as filed (server/letters/closing-letters.service.ts);
 * - reply_upload.part: which send through the reply link brought the file (1, 2, …), since a
 *   link now takes several sends until the due date or until the taxpayer says that is all;
 * - document_request.completed_by: who ended the sends ('taxpayer' said that is everything,
 *   or the 'due-date' passed after at least one send).
 */
export class ClosingLetters1766020000000 implements MigrationInterface {
  name = 'ClosingLetters1766020000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE case_correction (
        case_id uuid NOT NULL REFERENCES exam_case (id),
        line_code text NOT NULL,
        filed_amount numeric(14,2) NOT NULL,
        corrected_amount numeric(14,2) NOT NULL CHECK (corrected_amount >= 0),
        created_by uuid REFERENCES app_user (id),
        created_at timestamptz NOT NULL DEFAULT now(),
        PRIMARY KEY (case_id, line_code)
      )`);
    await q.query(`ALTER TABLE reply_upload ADD COLUMN part integer NOT NULL DEFAULT 1 CHECK (part >= 1)`);
    await q.query(`ALTER TABLE document_request ADD COLUMN completed_by text CHECK (completed_by IN ('taxpayer', 'due-date'))`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE document_request DROP COLUMN completed_by`);
    await q.query(`ALTER TABLE reply_upload DROP COLUMN part`);
    await q.query(`DROP TABLE case_correction`);
  }
}

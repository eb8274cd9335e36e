import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Measuring the programme (issue 17, docs/methods.md#programme-outcomes): a case says whether
 * the score selected it or it came from the run's random review sample, and a run keeps the
 * sample's seed, share and sampling rate so the draw can be repeated and its cases weighted.
 */
export class Programme1765000000000 implements MigrationInterface {
  name = 'Programme1765000000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(
      `ALTER TABLE exam_case ADD COLUMN selection text NOT NULL DEFAULT 'score' CONSTRAINT exam_case_selection_check CHECK (selection IN ('score', 'random'))`,
    );
    await q.query(`CREATE INDEX idx_exam_case_random ON exam_case (batch_id) WHERE selection = 'random'`);
    // {seed, share, candidates, drawn, rate}: null until the run's finishing step draws the sample.
    await q.query(`ALTER TABLE scoring_run ADD COLUMN random_sample jsonb`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE scoring_run DROP COLUMN random_sample`);
    await q.query(`DROP INDEX idx_exam_case_random`);
    await q.query(`ALTER TABLE exam_case DROP COLUMN selection`);
  }
}

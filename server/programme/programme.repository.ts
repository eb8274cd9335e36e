/**
 * SQL behind the Programme (issue 17, docs/methods.md#programme-outcomes): the random review
 * sample's candidates and record, the finished cases the outcome figures are built from, and a
 * batch's random cases.
 */
import { FINAL_STATES } from '../../shared/cases';
import type { Db } from '../db/db';

/** A scored return below the cut without a case: a candidate for random review. */
export interface CandidateRecord {
  returnId: string;
  taxpayerId: string;
  scoreId: string;
  activityCode: string;
  incomeCents: string;
}

/** The run of (batch, version), its size and any sample already drawn. */
export async function findRun(db: Db, batchId: string, version: number): Promise<{ id: string; total: number; randomSample: unknown } | null> {
  const r = await db.query(`SELECT id, total, random_sample AS "randomSample" FROM scoring_run WHERE batch_id = $1 AND profile_version = $2`, [
    batchId,
    version,
  ]);
  return r[0] ?? null;
}

/** Returns scored under the version that the score did not select and that have no case. */
export async function sampleCandidates(db: Db, batchId: string, version: number): Promise<CandidateRecord[]> {
  return db.query(
    `SELECT s.return_id AS "returnId", r.taxpayer_id AS "taxpayerId", s.id::text AS "scoreId", t.activity_code AS "activityCode",
            coalesce(s.breakdown->'totals'->>'incomeCents', '0') AS "incomeCents"
       FROM return_score s
       JOIN tax_return r ON r.id = s.return_id
       JOIN taxpayer t ON t.id = r.taxpayer_id
      WHERE s.batch_id = $1 AND s.profile_version = $2 AND s.status = 'scored'
        AND coalesce((s.breakdown->>'selected')::boolean, false) = false
        AND NOT EXISTS (SELECT 1 FROM exam_case c WHERE c.return_id = s.return_id)`,
    [batchId, version],
  );
}

/** Stores the drawn sample's record with the run. */
export async function saveRunSample(db: Db, runId: string, sample: unknown): Promise<void> {
  await db.query(`UPDATE scoring_run SET random_sample = $2::jsonb WHERE id = $1`, [runId, JSON.stringify(sample)]);
}

/** One finished case (or open random case) as the outcome figures need it. */
export interface OutcomeRecord {
  id: string;
  selection: 'score' | 'random';
  state: string;
  adjustedCents: string | null;
  closedAt: Date | null;
  assigneeId: string | null;
  assigneeName: string | null;
  batchId: string;
  batchLabel: string;
  decile: number | null;
  factors: { key: string; label: string }[] | null;
}

/**
 * Cases finished between `from` and `to` (dates, both included; open-ended when absent), in one
 * batch or all, with each one's score decile among its batch's scored returns under the same
 * profile version, and the components that added points to its score.
 */
export async function finishedCases(db: Db, f: { from?: string; to?: string; batch?: string }): Promise<OutcomeRecord[]> {
  return db.query(
    `WITH fc AS (
       SELECT c.id, c.selection, c.state, round(c.adjusted_amount * 100)::bigint::text AS adjusted_cents, c.closed_at, c.assignee_id, c.batch_id, c.score_id
         FROM exam_case c
        WHERE c.state = ANY($1::text[]) AND c.closed_at IS NOT NULL
          AND ($2::date IS NULL OR c.closed_at >= $2::date)
          AND ($3::date IS NULL OR c.closed_at < $3::date + 1)
          AND ($4::uuid IS NULL OR c.batch_id = $4::uuid)),
     runs AS (SELECT DISTINCT s.batch_id, s.profile_version FROM fc JOIN return_score s ON s.id = fc.score_id),
     ranked AS (
       SELECT s.id, ntile(10) OVER (PARTITION BY s.batch_id, s.profile_version ORDER BY s.risk_score, s.id) AS decile
         FROM return_score s JOIN runs ON runs.batch_id = s.batch_id AND runs.profile_version = s.profile_version
        WHERE s.status = 'scored')
     SELECT fc.id, fc.selection, fc.state, fc.adjusted_cents AS "adjustedCents", fc.closed_at AS "closedAt", fc.assignee_id AS "assigneeId",
            u.display_name AS "assigneeName", fc.batch_id AS "batchId",
            coalesce(b.file_names[1], 'batch') || ' (' || to_char(b.created_at, 'YYYY-MM-DD') || ')' AS "batchLabel",
            ranked.decile,
            (SELECT jsonb_agg(jsonb_build_object('key', x->>'key', 'label', x->>'label'))
               FROM jsonb_array_elements(s.breakdown->'components') x WHERE (x->>'points')::numeric > 0) AS factors
       FROM fc
       JOIN return_score s ON s.id = fc.score_id
       JOIN filing_batch b ON b.id = fc.batch_id
       LEFT JOIN app_user u ON u.id = fc.assignee_id
       LEFT JOIN ranked ON ranked.id = fc.score_id`,
    [FINAL_STATES, f.from ?? null, f.to ?? null, f.batch ?? null],
  );
}

/** Random review cases not yet finished, in one batch or all. */
export async function countOpenRandom(db: Db, batch?: string): Promise<number> {
  const r = await db.query(
    `SELECT count(*)::int AS n FROM exam_case WHERE selection = 'random' AND state <> ALL($1::text[]) AND ($2::uuid IS NULL OR batch_id = $2::uuid)`,
    [FINAL_STATES, batch ?? null],
  );
  return r[0].n;
}

/** A batch's random review cases with their return references and taxpayers (for the access log). */
export async function randomCasesOf(db: Db, batchId: string): Promise<{ caseId: string; returnRef: string; taxpayerId: string }[]> {
  return db.query(
    `SELECT c.id AS "caseId", r.return_ref AS "returnRef", c.taxpayer_id AS "taxpayerId"
       FROM exam_case c JOIN tax_return r ON r.id = c.return_id
      WHERE c.batch_id = $1 AND c.selection = 'random'
      ORDER BY r.return_ref, c.id`,
    [batchId],
  );
}

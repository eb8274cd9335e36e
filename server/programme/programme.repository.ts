/**
 * SQL behind the Programme (issue 17, docs/methods.md#programme-outcomes): the random review
 * sample's candidates and record, the finished cases the outcome figures are built from, and a
 * batch's random cases.
 */
import { FINAL_STATES } from '../../shared/cases';
import type { SelectedScore } from '../cases/case-open.repository';
import type { Db } from '../db/db';

/** A scored return below the cut without a case: a candidate for random review. */
export interface CandidateRecord {
  returnId: string;
  taxpayerId: string;
  scoreId: string;
  activityCode: string;
  incomeCents: string;
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

/** The run's scored returns with a score above 0 (candidates of a capacity selection), as a case is opened from them. */
export async function positiveScores(db: Db, batchId: string, version: number): Promise<SelectedScore[]> {
  const rows: { returnId: string; taxpayerId: string; scoreId: string; riskScore: string; stakeCents: string; priority: string }[] = await db.query(
    `SELECT s.return_id AS "returnId", r.taxpayer_id AS "taxpayerId", s.id::text AS "scoreId", s.risk_score::text AS "riskScore",
            round(s.amount_at_stake * 100)::bigint::text AS "stakeCents", s.priority::text AS priority
       FROM return_score s JOIN tax_return r ON r.id = s.return_id
      WHERE s.batch_id = $1 AND s.profile_version = $2 AND s.status = 'scored' AND s.risk_score > 0`,
    [batchId, version],
  );
  return rows.map((r) => ({ ...r, riskScore: Number(r.riskScore), stakeCents: Number(r.stakeCents), priority: Number(r.priority) }));
}

/** Records in the chosen scores' breakdowns that they were selected (the cut follows in {@link writeCutOnCases}). */
export async function markSelected(db: Db, scoreIds: string[]): Promise<void> {
  if (!scoreIds.length) return;
  await db.query(`UPDATE return_score SET breakdown = jsonb_set(breakdown, '{selected}', 'true') WHERE id = ANY($1::bigint[])`, [scoreIds]);
}

/** Writes the cut in force into the breakdowns of the run's selected scores and of those with a case (drawn at random), once each. */
export async function writeCutOnCases(db: Db, batchId: string, version: number, cut: number): Promise<void> {
  await db.query(
    `UPDATE return_score s SET breakdown = jsonb_set(s.breakdown, '{selectionCut}', to_jsonb($3::numeric))
      WHERE s.batch_id = $1 AND s.profile_version = $2
        AND (coalesce((s.breakdown->>'selected')::boolean, false) OR EXISTS (SELECT 1 FROM exam_case c WHERE c.score_id = s.id))`,
    [batchId, version, cut],
  );
}

/** The batch's latest finished scoring run: its profile version. */
export async function latestFinishedRun(db: Db, batchId: string): Promise<{ version: number } | null> {
  const r = await db.query(
    `SELECT profile_version AS version FROM scoring_run WHERE batch_id = $1 AND finished_at IS NOT NULL ORDER BY finished_at DESC, profile_version DESC LIMIT 1`,
    [batchId],
  );
  return r[0] ? { version: Number(r[0].version) } : null;
}

/** A scored return with its stored components, for the preview. */
export interface StoredScore {
  returnId: string;
  riskScore: number;
  priority: number;
  stakeCents: number;
  selected: boolean;
  components: { key: string; weight: number; strength: number; points: number }[];
}

/** Every scored return of a run with its components (weights, strengths, points) as stored. */
export async function storedScores(db: Db, batchId: string, version: number): Promise<StoredScore[]> {
  const rows: { returnId: string; riskScore: string; priority: string; stakeCents: string; selected: boolean; components: StoredScore['components'] }[] =
    await db.query(
      `SELECT s.return_id AS "returnId", s.risk_score::text AS "riskScore", s.priority::text AS priority,
              round(s.amount_at_stake * 100)::bigint::text AS "stakeCents",
              coalesce((s.breakdown->>'selected')::boolean, false) AS selected,
              (SELECT jsonb_agg(jsonb_build_object('key', x->>'key', 'weight', (x->>'weight')::numeric, 'strength', (x->>'strength')::numeric, 'points', (x->>'points')::numeric))
                 FROM jsonb_array_elements(s.breakdown->'components') x) AS components
         FROM return_score s
        WHERE s.batch_id = $1 AND s.profile_version = $2 AND s.status = 'scored'`,
      [batchId, version],
    );
  return rows.map((r) => ({
    returnId: r.returnId,
    riskScore: Number(r.riskScore),
    priority: Number(r.priority),
    stakeCents: Number(r.stakeCents),
    selected: r.selected,
    components: (r.components ?? []).map((c) => ({ key: c.key, weight: Number(c.weight), strength: Number(c.strength), points: Number(c.points) })),
  }));
}

/** A closed case (adjusted or no change) with its score's components and the chance it had of being examined. */
export interface ClosedForFit {
  id: string;
  selection: 'score' | 'random';
  adjusted: boolean;
  adjustedCents: string | null;
  /** The sampling rate of its run's random review sample (random cases only). */
  rate: number | null;
  components: { key: string; strength: number }[];
}

/** Every case closed adjusted or with no change, with what the outcome model needs. */
export async function closedCasesForFit(db: Db): Promise<ClosedForFit[]> {
  const rows: (Omit<ClosedForFit, 'rate'> & { rate: string | null })[] = await db.query(
    `SELECT c.id, c.selection, c.state = 'closed_adjusted' AS adjusted, round(c.adjusted_amount * 100)::bigint::text AS "adjustedCents",
            run.random_sample->>'rate' AS rate,
            (SELECT jsonb_agg(jsonb_build_object('key', x->>'key', 'strength', (x->>'strength')::numeric)) FROM jsonb_array_elements(s.breakdown->'components') x) AS components
       FROM exam_case c
       JOIN return_score s ON s.id = c.score_id AND s.tax_year = c.tax_year
       LEFT JOIN scoring_run run ON run.batch_id = s.batch_id AND run.profile_version = s.profile_version
      WHERE c.state IN ('closed_adjusted', 'closed_no_change')
      ORDER BY c.id`,
  );
  return rows.map((r) => ({
    ...r,
    rate: r.rate === null ? null : Number(r.rate),
    components: (r.components ?? []).map((c) => ({ key: c.key, strength: Number(c.strength) })),
  }));
}

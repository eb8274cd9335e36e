/**
 * Queries behind the supervisor's workload: counts per examiner, one pass over their cases.
 */
import { FINAL_STATES } from '../../shared/cases';
import { DEADLINE_NEAR_DAYS } from '../../shared/returns/assessment-deadline';
import type { Db } from '../db/db';

/** Per-examiner counts for the workload screen (one pass over their cases). */
export interface WorkloadCounts {
  id: string;
  username: string;
  displayName: string;
  assigned: number;
  inReview: number;
  awaitingReply: number;
  overdue: number;
  /** Still being worked with the assessment deadline within DEADLINE_NEAR_DAYS (issue 13). */
  deadlinesNear: number;
  finished30d: number;
}

/**
 * Counts per active examiner (and anyone else still holding cases), using
 * idx_case_assignee; `today` is the date overdue is measured against.
 */
export async function workloadCounts(db: Db, today: string): Promise<WorkloadCounts[]> {
  return db.query(
    `WITH per AS (
       SELECT c.assignee_id,
              count(*) FILTER (WHERE c.state = 'assigned')::int AS assigned,
              count(*) FILTER (WHERE c.state = 'in_review')::int AS in_review,
              count(*) FILTER (WHERE c.state = 'awaiting_reply')::int AS awaiting_reply,
              count(*) FILTER (WHERE c.state IN ('assigned', 'in_review', 'awaiting_reply') AND c.due_date < $1::date)::int AS overdue,
              count(*) FILTER (WHERE c.state IN ('assigned', 'in_review', 'awaiting_reply') AND c.assess_by < $1::date + $3::int)::int AS deadlines_near,
              count(*) FILTER (WHERE c.state = ANY($2::text[]) AND c.closed_at >= $1::date - 30)::int AS finished_30d
         FROM exam_case c
        WHERE c.assignee_id IS NOT NULL
        GROUP BY c.assignee_id)
     SELECT u.id, u.username, u.display_name AS "displayName",
            coalesce(per.assigned, 0) AS assigned, coalesce(per.in_review, 0) AS "inReview", coalesce(per.awaiting_reply, 0) AS "awaitingReply",
            coalesce(per.overdue, 0) AS overdue, coalesce(per.deadlines_near, 0) AS "deadlinesNear", coalesce(per.finished_30d, 0) AS "finished30d"
       FROM app_user u LEFT JOIN per ON per.assignee_id = u.id
      WHERE (u.role = 'examiner' AND u.active) OR coalesce(per.assigned + per.in_review + per.awaiting_reply, 0) > 0
      ORDER BY u.display_name, u.username`,
    [today, FINAL_STATES, DEADLINE_NEAR_DAYS],
  );
}

/** Open cases nobody holds. */
export async function countUnassigned(db: Db): Promise<number> {
  const r = await db.query(`SELECT count(*)::int AS n FROM exam_case WHERE state = 'open'`);
  return r[0].n;
}

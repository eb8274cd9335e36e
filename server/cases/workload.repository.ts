/**
 * Queries behind the supervisor's workload: counts per examiner, one pass over their cases.
 */
import { FINAL_STATES } from '../../shared/cases';
import type { Db } from '../db/db';

/** Per-examiner counts for the workload screen (one pass over their cases). */
export interface WorkloadCountRow {
  id: string;
  username: string;
  display_name: string;
  assigned: number;
  in_review: number;
  awaiting_reply: number;
  overdue: number;
  finished_30d: number;
}

/**
 * Counts per active examiner (and anyone else still holding cases), using
 * idx_case_assignee; `today` is the date overdue is measured against.
 */
export async function workloadCounts(db: Db, today: string): Promise<WorkloadCountRow[]> {
  return db.query(
    `WITH per AS (
       SELECT c.assignee_id,
              count(*) FILTER (WHERE c.state = 'assigned')::int AS assigned,
              count(*) FILTER (WHERE c.state = 'in_review')::int AS in_review,
              count(*) FILTER (WHERE c.state = 'awaiting_reply')::int AS awaiting_reply,
              count(*) FILTER (WHERE c.state IN ('assigned', 'in_review', 'awaiting_reply') AND c.due_date < $1::date)::int AS overdue,
              count(*) FILTER (WHERE c.state = ANY($2::text[]) AND c.closed_at >= $1::date - 30)::int AS finished_30d
         FROM exam_case c
        WHERE c.assignee_id IS NOT NULL
        GROUP BY c.assignee_id)
     SELECT u.id, u.username, u.display_name,
            coalesce(per.assigned, 0) AS assigned, coalesce(per.in_review, 0) AS in_review, coalesce(per.awaiting_reply, 0) AS awaiting_reply,
            coalesce(per.overdue, 0) AS overdue, coalesce(per.finished_30d, 0) AS finished_30d
       FROM app_user u LEFT JOIN per ON per.assignee_id = u.id
      WHERE (u.role = 'examiner' AND u.active) OR coalesce(per.assigned + per.in_review + per.awaiting_reply, 0) > 0
      ORDER BY u.display_name, u.username`,
    [today, FINAL_STATES],
  );
}

/** Open cases nobody holds. */
export async function countUnassigned(db: Db): Promise<number> {
  const r = await db.query(`SELECT count(*)::int AS n FROM exam_case WHERE state = 'open'`);
  return r[0].n;
}

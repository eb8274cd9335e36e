/**
 * The supervisor's workload: per examiner, how many cases wait to be started, are in
 * review, await a reply, and are past their due date. Counts only, no taxpayer data, so
 * reading it is not written to the access log (reassigning is, through case-workflow.ts).
 */
import type { DataSource } from 'typeorm';
import type { Workload } from '../../shared/case-api';
import { countUnassigned, workloadCounts } from './workload.repository';

/** Today's date as YYYY-MM-DD in the server's time zone (due dates are calendar dates). */
function today(now = new Date()): string {
  const p = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${p(now.getMonth() + 1)}-${p(now.getDate())}`;
}

/** Per-examiner counts and the open cases nobody holds. */
export async function getWorkload(ds: DataSource, now = new Date()): Promise<Workload> {
  const asOf = today(now);
  const [rows, unassigned] = await Promise.all([workloadCounts(ds, asOf), countUnassigned(ds)]);
  return {
    examiners: rows.map((r) => ({
      examinerId: r.id,
      username: r.username,
      displayName: r.display_name,
      assigned: r.assigned,
      inReview: r.in_review,
      awaitingReply: r.awaiting_reply,
      overdue: r.overdue,
      open: r.assigned + r.in_review + r.awaiting_reply,
      finished30d: r.finished_30d,
    })),
    unassigned,
    asOf,
  };
}

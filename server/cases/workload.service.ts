/**
 * The supervisor's workload: per examiner, how many cases wait to be started, are in
 * review, await a reply, and are past their due date. Counts only, no taxpayer data, so
 * reading it is not written to the access log (reassigning is, through case-workflow.ts).
 */
import type { DataSource } from 'typeorm';
import type { Workload } from '../../shared/case-api';
import { today } from '../clock';
import { countUnassigned, workloadCounts } from './workload.repository';

/** Per-examiner counts and the open cases nobody holds, as of the office clock's today (server/clock.ts). */
export async function getWorkload(ds: DataSource, asOf: string = today()): Promise<Workload> {
  const [rows, unassigned] = await Promise.all([workloadCounts(ds, asOf), countUnassigned(ds)]);
  return {
    examiners: rows.map((r) => ({
      examinerId: r.id,
      username: r.username,
      displayName: r.displayName,
      assigned: r.assigned,
      inReview: r.inReview,
      awaitingReply: r.awaitingReply,
      overdue: r.overdue,
      deadlinesNear: r.deadlinesNear,
      open: r.assigned + r.inReview + r.awaitingReply,
      finished30d: r.finished30d,
    })),
    unassigned,
    asOf,
  };
}

/**
 * SQL of the invented demo history (server/seed/demo-history.ts): a past period's batches moved
 * back in time and their cases closed with drawn outcomes.
 */
import type { Db } from '../db/db';

/** A case of a history batch with what the drawn outcome needs. */
export interface HistoryCase {
  id: string;
  returnRef: string;
  stakeCents: string;
}

/** The batch's cases with their return references and amounts at stake (cents). */
export async function historyCases(db: Db, batchId: string): Promise<HistoryCase[]> {
  return db.query(
    `SELECT c.id, r.return_ref AS "returnRef", round(c.amount_at_stake * 100)::bigint::text AS "stakeCents"
       FROM exam_case c JOIN tax_return r ON r.id = c.return_id WHERE c.batch_id = $1 ORDER BY r.return_ref`,
    [batchId],
  );
}

/** Moves a batch, its scoring run and its cases' opening back to `at`. */
export async function backdateBatch(db: Db, batchId: string, at: Date): Promise<void> {
  await db.query(`UPDATE filing_batch SET created_at = $2 WHERE id = $1`, [batchId, at]);
  await db.query(`UPDATE exam_case SET opened_at = $2, updated_at = $2 WHERE batch_id = $1`, [batchId, at]);
  await db.query(`UPDATE case_event e SET at = $2 FROM exam_case c WHERE c.id = e.case_id AND c.batch_id = $1`, [batchId, at]);
}

/** One drawn outcome. */
export interface HistoryOutcome {
  id: string;
  assigneeId: string;
  state: 'closed_adjusted' | 'closed_no_change';
  adjustedCents: number | null;
  closedAt: Date;
  outcome: string;
}

/** Closes the cases with their drawn outcomes, each with a closing event marked as invented history. */
export async function closeHistoryCases(db: Db, rows: HistoryOutcome[]): Promise<void> {
  if (!rows.length) return;
  const cols = [
    rows.map((r) => r.id),
    rows.map((r) => r.assigneeId),
    rows.map((r) => r.state),
    rows.map((r) => (r.adjustedCents === null ? null : (r.adjustedCents / 100).toFixed(2))),
    rows.map((r) => r.closedAt.toISOString()),
    rows.map((r) => r.outcome),
  ];
  await db.query(
    `UPDATE exam_case c SET state = u.state, assignee_id = u.assignee, adjusted_amount = u.adjusted, closed_at = u.closed_at, updated_at = u.closed_at, outcome = u.outcome
       FROM unnest($1::uuid[], $2::uuid[], $3::text[], $4::numeric[], $5::timestamptz[], $6::text[]) AS u(id, assignee, state, adjusted, closed_at, outcome)
      WHERE c.id = u.id`,
    cols,
  );
  await db.query(
    `INSERT INTO case_event (case_id, actor_id, kind, from_state, to_state, detail, at)
     SELECT u.id, u.assignee, 'transition', 'in_review', u.state, jsonb_build_object('outcome', u.outcome, 'demoHistory', true), u.closed_at
       FROM unnest($1::uuid[], $2::uuid[], $3::text[], $4::timestamptz[], $5::text[]) AS u(id, assignee, state, closed_at, outcome)`,
    [cols[0], cols[1], cols[2], cols[4], cols[5]],
  );
}

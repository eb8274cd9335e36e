/**
 * SQL of the daily pass (issue 13): requests to expire or remind, examiners' digests, and the
 * record of each day's runs. The case moves an expiry makes are the cases module's
 * (server/cases/case-workflow.ts).
 */
import type { EntityManager } from 'typeorm';
import type { Db } from '../db/db';

/** A waiting document request with what its reminder or expiry needs. */
export interface WaitingRequest {
  id: string;
  caseId: string;
  letterId: string;
  items: string[];
  dueDate: string;
  email: string;
  sentOn: string;
  taxpayerId: string;
  taxpayerName: string;
  postalAddress: string | null;
  tin: string;
  returnRef: string;
  taxYear: number;
}

const WAITING = `SELECT d.id, d.case_id AS "caseId", d.letter_id AS "letterId", d.items, d.due_date::text AS "dueDate", d.email,
                        to_char(l.created_at, 'YYYY-MM-DD') AS "sentOn", c.taxpayer_id AS "taxpayerId", t.name AS "taxpayerName",
                        t.postal_address AS "postalAddress", t.tin, r.return_ref AS "returnRef", r.tax_year AS "taxYear"
                   FROM document_request d
                   JOIN letter l ON l.id = d.letter_id
                   JOIN exam_case c ON c.id = d.case_id
                   JOIN taxpayer t ON t.id = c.taxpayer_id
                   JOIN tax_return r ON r.id = c.return_id`;

/** Unanswered requests whose due date is before `day`. */
export async function findRequestsPastDue(db: Db, day: string): Promise<WaitingRequest[]> {
  return db.query(`${WAITING} WHERE d.state = 'sent' AND d.due_date < $1::date ORDER BY d.due_date, d.id`, [day]);
}

/** Unanswered requests due from `day` to `until` (inclusive) not yet reminded. */
export async function findRequestsToRemind(db: Db, day: string, until: string): Promise<WaitingRequest[]> {
  return db.query(`${WAITING} WHERE d.state = 'sent' AND d.reminded_at IS NULL AND d.due_date BETWEEN $1::date AND $2::date ORDER BY d.due_date, d.id`, [
    day,
    until,
  ]);
}

/** Marks a request expired if it still waits; true when this call did it. */
export async function expireRequest(m: EntityManager, requestId: string): Promise<boolean> {
  const r = await m.query(`UPDATE document_request SET state = 'expired' WHERE id = $1 AND state = 'sent' RETURNING id`, [requestId]);
  return (Array.isArray(r[0]) ? r[0] : r).length > 0;
}

/**
 * Ends the sends of a request past its due date that took at least one (records in parts,
 * issue 13): answered, by the due date. Returns how many sends it took (0: none, nothing done).
 */
export async function completeByDueDate(m: EntityManager, requestId: string): Promise<number> {
  const r = await m.query(
    `UPDATE document_request d SET state = 'answered', completed_by = 'due-date',
            answered_at = (SELECT max(u.created_at) FROM reply_upload u WHERE u.document_request_id = d.id)
      WHERE d.id = $1 AND d.state = 'sent' AND EXISTS (SELECT 1 FROM reply_upload u WHERE u.document_request_id = d.id)
      RETURNING (SELECT max(u.part) FROM reply_upload u WHERE u.document_request_id = d.id) AS sends`,
    [requestId],
  );
  const rows = Array.isArray(r[0]) ? r[0] : r;
  return rows.length ? Number(rows[0].sends) : 0;
}

/** True when another request of the case still waits for a reply that is not yet late. */
export async function otherRequestWaiting(m: EntityManager, caseId: string, requestId: string, day: string): Promise<boolean> {
  const r = await m.query(`SELECT 1 FROM document_request WHERE case_id = $1 AND id <> $2 AND state = 'sent' AND due_date >= $3::date LIMIT 1`, [
    caseId,
    requestId,
    day,
  ]);
  return r.length > 0;
}

/** Takes a waiting request for its reminder: gives it a new token hash; false when it was reminded or answered meanwhile. */
export async function takeForReminder(m: EntityManager, requestId: string, tokenHash: string, at: Date): Promise<boolean> {
  const r = await m.query(
    `UPDATE document_request SET token_hash = $2, reminded_at = $3 WHERE id = $1 AND state = 'sent' AND reminded_at IS NULL RETURNING id`,
    [requestId, tokenHash, at],
  );
  return (Array.isArray(r[0]) ? r[0] : r).length > 0;
}

/** An examiner's digest: what needs action, since `since`. */
export interface DigestFacts {
  examinerId: string;
  username: string;
  displayName: string;
  email: string | null;
  replies: { caseId: string; returnRef: string }[];
  expired: { caseId: string; returnRef: string }[];
  deadlines: { caseId: string; returnRef: string; assessBy: string }[];
}

/**
 * Examiners who have not had today's digest, with what needs action: replies and expiries
 * since their last digest (or the last day), by the database's own timestamps, which the
 * case events carry too.
 */
export async function findDigests(db: Db, day: string, nearUntil: string): Promise<DigestFacts[]> {
  const rows: { id: string; username: string; display_name: string; email: string | null; replies: unknown; expired: unknown; deadlines: unknown }[] =
    await db.query(
      `WITH x AS (SELECT u.*, coalesce((SELECT max(h.sent_at) FROM housekeeping_digest h WHERE h.examiner_id = u.id), now() - interval '1 day') AS since FROM app_user u)
     SELECT u.id, u.username, u.display_name, u.email,
            coalesce((SELECT jsonb_agg(jsonb_build_object('caseId', c.id, 'returnRef', r.return_ref) ORDER BY r.return_ref)
                        FROM exam_case c JOIN tax_return r ON r.id = c.return_id
                       WHERE c.assignee_id = u.id AND EXISTS (SELECT 1 FROM case_event e WHERE e.case_id = c.id AND e.kind = 'reply-received' AND e.at >= u.since)), '[]') AS replies,
            coalesce((SELECT jsonb_agg(jsonb_build_object('caseId', c.id, 'returnRef', r.return_ref) ORDER BY r.return_ref)
                        FROM exam_case c JOIN tax_return r ON r.id = c.return_id
                       WHERE c.assignee_id = u.id AND EXISTS (SELECT 1 FROM case_event e WHERE e.case_id = c.id AND e.kind = 'reply-overdue' AND e.at >= u.since)), '[]') AS expired,
            coalesce((SELECT jsonb_agg(jsonb_build_object('caseId', c.id, 'returnRef', r.return_ref, 'assessBy', c.assess_by::text) ORDER BY c.assess_by, r.return_ref)
                        FROM exam_case c JOIN tax_return r ON r.id = c.return_id
                       WHERE c.assignee_id = u.id AND c.state IN ('assigned', 'in_review', 'awaiting_reply') AND c.assess_by < $2::date), '[]') AS deadlines
       FROM x u
      WHERE u.role = 'examiner' AND u.active
        AND NOT EXISTS (SELECT 1 FROM housekeeping_digest h WHERE h.day = $1::date AND h.examiner_id = u.id)
      ORDER BY u.username`,
      [day, nearUntil],
    );
  return rows.map((r) => ({
    examinerId: r.id,
    username: r.username,
    displayName: r.display_name,
    email: r.email,
    replies: r.replies as DigestFacts['replies'],
    expired: r.expired as DigestFacts['expired'],
    deadlines: r.deadlines as DigestFacts['deadlines'],
  }));
}

/** Records today's digest for an examiner; false when one was recorded already. */
export async function recordDigest(m: EntityManager, day: string, examinerId: string): Promise<boolean> {
  const r = await m.query(`INSERT INTO housekeeping_digest (day, examiner_id) VALUES ($1, $2) ON CONFLICT DO NOTHING RETURNING day`, [day, examinerId]);
  return r.length > 0;
}

/** Adds this run's counts to the day's record. */
export async function recordRun(db: Db, day: string, result: Record<string, number>, at: Date): Promise<void> {
  await db.query(
    `INSERT INTO housekeeping_run (day, started_at, finished_at, result) VALUES ($1, $3, $3, $2::jsonb)
     ON CONFLICT (day) DO UPDATE SET finished_at = $3,
       result = (SELECT jsonb_object_agg(k, coalesce((housekeeping_run.result ->> k)::int, 0) + coalesce((EXCLUDED.result ->> k)::int, 0))
                   FROM jsonb_object_keys(EXCLUDED.result) AS k)`,
    [day, JSON.stringify(result), at],
  );
}

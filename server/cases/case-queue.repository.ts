/**
 * Queries behind the examination queue and its export. Plain SQL: the queue must stay fast
 * at 100,000 cases, so every order is written to walk one of the exam_case indexes
 * (idx_case_priority, idx_case_score, idx_case_state_priority, idx_case_opened) and stop
 * after one page.
 */
import type { CaseState } from '../../shared/cases';
import { NEEDS_DEADLINE_DAYS, type CaseListQuery, type CaseSort, type NeedsKind, type NeedsMe } from '../../shared/case-api';
import { addDays } from '../../shared/letters';
import { today } from '../clock';
import type { Db } from '../db/db';
import type { ExamCase } from './exam-case.entity';

/** The queue's filters after the route resolved `me` to the caller. */
export interface CaseFilter {
  states?: CaseState[];
  /** An examiner's id, or null for "nobody yet". */
  assignee?: string | null;
  batch?: string;
  taxYear?: number;
  activity?: string;
  q?: string;
  /** Only cases whose assessment deadline is on or before this date (YYYY-MM-DD). */
  assessByUpTo?: string;
  /** Only this person's cases still being worked that need them for this reason (issue 14). */
  needs?: { kind: NeedsKind; me: string; today: string };
}

/** Builds the filter from a parsed query for the signed-in user. */
export function caseFilterOf(q: CaseListQuery, me: string): CaseFilter {
  return {
    states: q.state,
    assignee: q.assignee === undefined ? undefined : q.assignee === 'me' ? me : q.assignee === 'none' ? null : q.assignee,
    batch: q.batch,
    taxYear: q.taxYear,
    activity: q.activity,
    q: q.q || undefined,
    assessByUpTo: q.deadlineWithin === undefined ? undefined : addDays(today(), q.deadlineWithin),
    needs: q.needs === undefined ? undefined : { kind: q.needs, me, today: today() },
  };
}

/**
 * A queue line: the case's own fields under the entity's names (ExamCase), and the
 * return's, taxpayer's and examiner's display fields beside them.
 */
export type QueueCase = Pick<
  ExamCase,
  'id' | 'state' | 'selection' | 'riskScore' | 'priority' | 'amountAtStake' | 'assigneeId' | 'openedAt' | 'batchId' | 'taxpayerId' | 'dueDate'
> & {
  assigneeName: string | null;
  returnRef: string;
  taxYear: number;
  tin: string;
  taxpayerName: string;
  activityCode: string;
  assessBy: string | null;
  replyUnread: boolean;
};

// Each order matches an index column for column, so PostgreSQL reads the index in order and
// stops after OFFSET + LIMIT rows instead of sorting every case.
const ORDER: Record<CaseSort, string> = {
  priority: 'c.priority DESC, c.id',
  score: 'c.risk_score DESC, c.id',
  age: 'c.opened_at, c.id',
  // Soonest first; no limit (null) last: idx_case_assess_by.
  deadline: 'c.assess_by NULLS LAST, c.id',
};

const escapeLike = (s: string) => s.replace(/[\\%_]/g, (m) => `\\${m}`);

/** Case-event kinds by which someone else gives a case to an examiner (server/cases/case-workflow.ts). */
const HANDED_KINDS = ['assigned', 'reassigned', 'handed-over'];

/**
 * The "Needs me" conditions on exam_case (alias c) for one person, each true only for their
 * own cases still being worked (docs/design.md#case-states). "Seen" is when that person, as
 * the case's examiner, last opened it (case_attention.assignee_seen_at).
 */
function needsCondition(kind: NeedsKind, p: (v: unknown) => string, me: string, todayIso: string): string {
  const mine = `c.assignee_id = ${p(me)} AND c.state IN ('assigned', 'in_review', 'awaiting_reply')`;
  const seen = `COALESCE((SELECT a.assignee_seen_at FROM case_attention a WHERE a.case_id = c.id), '-infinity'::timestamptz)`;
  switch (kind) {
    case 'reply':
      return `${mine} AND EXISTS (SELECT 1 FROM case_attention a WHERE a.case_id = c.id AND a.reply_unread_since IS NOT NULL)`;
    case 'expired':
      return `${mine} AND EXISTS (SELECT 1 FROM case_event e WHERE e.case_id = c.id AND e.kind = 'reply-overdue' AND e.at > ${seen})`;
    case 'deadline':
      return `${mine} AND c.assess_by <= ${p(addDays(todayIso, NEEDS_DEADLINE_DAYS))}::date`;
    case 'handed':
      return `${mine} AND EXISTS (SELECT 1 FROM case_event e WHERE e.case_id = c.id AND e.kind = ANY(${p(HANDED_KINDS)}::text[])
                 AND e.detail->>'to' = c.assignee_id::text AND e.actor_id IS DISTINCT FROM c.assignee_id AND e.at > ${seen})`;
  }
}

/**
 * WHERE clause on exam_case alone (alias c) and its parameters. Filters on the return or
 * the taxpayer are semi-joins, so paging and counting walk exam_case's indexes and join
 * the display columns for one page only.
 */
function where(f: CaseFilter, params: unknown[]): string {
  const parts: string[] = [];
  const p = (v: unknown) => {
    params.push(v);
    return `$${params.length}`;
  };
  if (f.states?.length === 1) parts.push(`c.state = ${p(f.states[0])}`);
  else if (f.states?.length) parts.push(`c.state = ANY(${p(f.states)}::text[])`);
  if (f.assignee === null) parts.push('c.assignee_id IS NULL');
  else if (f.assignee) parts.push(`c.assignee_id = ${p(f.assignee)}`);
  if (f.batch) parts.push(`c.batch_id = ${p(f.batch)}`);
  if (f.assessByUpTo) parts.push(`c.assess_by <= ${p(f.assessByUpTo)}::date`);
  if (f.needs) parts.push(needsCondition(f.needs.kind, p, f.needs.me, f.needs.today));
  // A case carries its return's year (the key of its score: docs/design.md#partitions-by-tax-year).
  if (f.taxYear !== undefined) parts.push(`c.tax_year = ${p(f.taxYear)}`);
  if (f.activity) parts.push(`EXISTS (SELECT 1 FROM taxpayer t WHERE t.id = c.taxpayer_id AND t.activity_code = ${p(f.activity)})`);
  if (f.q) {
    const digits = f.q.replace(/[\s-]/g, '');
    if (/^\d{9}$/.test(digits)) {
      // A full TIN: the taxpayer's unique index finds it; their cases follow.
      parts.push(`c.taxpayer_id IN (SELECT id FROM taxpayer WHERE tin = ${p(digits)})`);
    } else {
      // A return reference, by prefix in any case (idx_tax_return_ref_upper), then the case by
      // return; or a part of the taxpayer's name in any case (issue 14). The name is matched
      // anywhere in it (people search by surname), which reads the taxpayer table once.
      parts.push(
        `(c.return_id IN (SELECT id FROM tax_return WHERE upper(return_ref) LIKE ${p(escapeLike(f.q.toUpperCase()) + '%')})
          OR c.taxpayer_id IN (SELECT id FROM taxpayer WHERE name ILIKE ${p('%' + escapeLike(f.q) + '%')}))`,
      );
    }
  }
  return parts.length ? `WHERE ${parts.join(' AND ')}` : '';
}

/**
 * One page of the queue, in the asked order. The page's ids are found on exam_case alone
 * (an index walk that skips OFFSET entries without touching other tables); only those
 * rows are joined to their return, taxpayer and examiner.
 */
export async function findCasePage(db: Db, f: CaseFilter, sort: CaseSort, page: number, pageSize: number): Promise<QueueCase[]> {
  const params: unknown[] = [];
  const w = where(f, params);
  params.push(pageSize, (page - 1) * pageSize);
  return db.query(
    `SELECT c.id, c.state, c.selection, c.risk_score AS "riskScore", c.priority, c.amount_at_stake AS "amountAtStake", c.assignee_id AS "assigneeId",
            u.display_name AS "assigneeName", c.opened_at AS "openedAt", to_char(c.due_date, 'YYYY-MM-DD') AS "dueDate", to_char(c.assess_by, 'YYYY-MM-DD') AS "assessBy", c.batch_id AS "batchId",
            r.return_ref AS "returnRef", r.tax_year AS "taxYear", t.tin, t.id AS "taxpayerId", t.name AS "taxpayerName", t.activity_code AS "activityCode",
            (a.reply_unread_since IS NOT NULL) AS "replyUnread"
       FROM (SELECT c.id FROM exam_case c ${w} ORDER BY ${ORDER[sort]} LIMIT $${params.length - 1} OFFSET $${params.length}) pg
       JOIN exam_case c ON c.id = pg.id
       JOIN tax_return r ON r.id = c.return_id
       JOIN taxpayer t ON t.id = c.taxpayer_id
       LEFT JOIN app_user u ON u.id = c.assignee_id
       LEFT JOIN case_attention a ON a.case_id = c.id
      ORDER BY ${ORDER[sort]}`,
    params,
  );
}

/** How many cases match the filter. */
export async function countCases(db: Db, f: CaseFilter): Promise<number> {
  const params: unknown[] = [];
  const r = await db.query(`SELECT count(*)::int AS n FROM exam_case c ${where(f, params)}`, params);
  return r[0].n;
}

/** Every matching case in queue order, streamed in pages of `chunk` (for the export). */
export async function* iterateCases(db: Db, f: CaseFilter, sort: CaseSort, chunk = 2000): AsyncGenerator<QueueCase[]> {
  for (let page = 1; ; page++) {
    const rows = await findCasePage(db, f, sort, page, chunk);
    if (rows.length) yield rows;
    if (rows.length < chunk) return;
  }
}

/** How many of one person's cases need them for each reason (issue 14), as of `todayIso`. */
export async function countNeeds(db: Db, me: string, todayIso: string): Promise<NeedsMe> {
  const params: unknown[] = [];
  const p = (v: unknown) => {
    params.push(v);
    return `$${params.length}`;
  };
  const count = (kind: NeedsKind) => `(SELECT count(*)::int FROM exam_case c WHERE ${needsCondition(kind, p, me, todayIso)}) AS ${kind}`;
  const [row] = await db.query(`SELECT ${count('reply')}, ${count('expired')}, ${count('deadline')}, ${count('handed')}`, params);
  return { reply: row.reply, expired: row.expired, deadline: row.deadline, handed: row.handed };
}

/** Marks a case as having a taxpayer's reply its examiner has not opened (the reply link, in its transaction). */
export async function markReplyUnread(db: Db, caseId: string): Promise<void> {
  await db.query(
    `INSERT INTO case_attention (case_id, reply_unread_since) VALUES ($1, now())
     ON CONFLICT (case_id) DO UPDATE SET reply_unread_since = COALESCE(case_attention.reply_unread_since, EXCLUDED.reply_unread_since)`,
    [caseId],
  );
}

/**
 * The case's examiner opened it: clears an unread reply and notes when. Returns when the
 * cleared reply had arrived (null when there was none). Does nothing for anyone else.
 *
 * This is a write on every read of the case screen, so it writes only when the opening changes
 * something: a reply to clear, or a case event since the last "seen" (only events after it
 * count in {@link needsCondition}; with none, moving "seen" on would change no count). An
 * examiner reopening the same quiet case reads one index range and writes nothing.
 */
export async function markSeenByAssignee(db: Db, caseId: string, userId: string): Promise<Date | null> {
  const rows: { was: Date | null }[] = await db.query(
    `WITH held AS (SELECT id FROM exam_case WHERE id = $1 AND assignee_id = $2),
          before AS (SELECT reply_unread_since AS was FROM case_attention WHERE case_id IN (SELECT id FROM held)),
          up AS (
            INSERT INTO case_attention (case_id, assignee_seen_at) SELECT id, now() FROM held
            ON CONFLICT (case_id) DO UPDATE SET assignee_seen_at = now(), reply_unread_since = NULL
            WHERE case_attention.reply_unread_since IS NOT NULL OR case_attention.assignee_seen_at IS NULL
               OR EXISTS (SELECT 1 FROM case_event e WHERE e.case_id = case_attention.case_id AND e.at > case_attention.assignee_seen_at)
            RETURNING case_id)
     SELECT (SELECT was FROM before) AS was FROM up`,
    [caseId, userId],
  );
  return rows[0]?.was ?? null;
}

/** When an unread reply arrived on a case, or null (for readers other than its examiner). */
export async function findReplyUnreadSince(db: Db, caseId: string): Promise<Date | null> {
  const rows: { since: Date | null }[] = await db.query(`SELECT reply_unread_since AS since FROM case_attention WHERE case_id = $1`, [caseId]);
  return rows[0]?.since ?? null;
}

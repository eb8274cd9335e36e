/**
 * Queries behind the examination queue, one case, its notes and the workload. Plain SQL:
 * the queue must stay fast at 100,000 cases, so every order is written to walk one of the
 * exam_case indexes (idx_case_priority, idx_case_score, idx_case_state_priority,
 * idx_case_opened) and stop after one page.
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { CaseState } from '../../shared/cases';
import type { CaseListQuery, CaseSort } from '../../shared/case-api';

type Db = DataSource | EntityManager;

/** The queue's filters after the route resolved `me` to the caller. */
export interface CaseFilter {
  states?: CaseState[];
  /** An examiner's id, or null for "nobody yet". */
  assignee?: string | null;
  batch?: string;
  taxYear?: number;
  activity?: string;
  q?: string;
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
  };
}

/** A queue row as the database returns it. */
export interface CaseRow {
  id: string;
  state: CaseState;
  risk_score: string;
  priority: string;
  amount_at_stake: string;
  assignee_id: string | null;
  assignee_name: string | null;
  opened_at: Date;
  due_date: string | null;
  batch_id: string;
  return_ref: string;
  tax_year: number;
  tin: string;
  taxpayer_id: string;
  taxpayer_name: string;
  activity_code: string;
}

// Each order matches an index column for column, so PostgreSQL reads the index in order and
// stops after OFFSET + LIMIT rows instead of sorting every case.
const ORDER: Record<CaseSort, string> = {
  priority: 'c.priority DESC, c.id',
  score: 'c.risk_score DESC, c.id',
  age: 'c.opened_at, c.id',
};

const escapeLike = (s: string) => s.replace(/[\\%_]/g, (m) => `\\${m}`);

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
  if (f.taxYear !== undefined) parts.push(`EXISTS (SELECT 1 FROM tax_return r WHERE r.id = c.return_id AND r.tax_year = ${p(f.taxYear)})`);
  if (f.activity) parts.push(`EXISTS (SELECT 1 FROM taxpayer t WHERE t.id = c.taxpayer_id AND t.activity_code = ${p(f.activity)})`);
  if (f.q) {
    const digits = f.q.replace(/[\s-]/g, '');
    if (/^\d{9}$/.test(digits)) {
      // A full TIN: the taxpayer's unique index finds it; their cases follow.
      parts.push(`c.taxpayer_id IN (SELECT id FROM taxpayer WHERE tin = ${p(digits)})`);
    } else {
      // A return reference, by prefix in any case (idx_tax_return_ref_upper), then the case by return.
      parts.push(`c.return_id IN (SELECT id FROM tax_return WHERE upper(return_ref) LIKE ${p(escapeLike(f.q.toUpperCase()) + '%')})`);
    }
  }
  return parts.length ? `WHERE ${parts.join(' AND ')}` : '';
}

/**
 * One page of the queue, in the asked order. The page's ids are found on exam_case alone
 * (an index walk that skips OFFSET entries without touching other tables); only those
 * rows are joined to their return, taxpayer and examiner.
 */
export async function findCasePage(db: Db, f: CaseFilter, sort: CaseSort, page: number, pageSize: number): Promise<CaseRow[]> {
  const params: unknown[] = [];
  const w = where(f, params);
  params.push(pageSize, (page - 1) * pageSize);
  return db.query(
    `SELECT c.id, c.state, c.risk_score, c.priority, c.amount_at_stake, c.assignee_id, u.display_name AS assignee_name,
            c.opened_at, to_char(c.due_date, 'YYYY-MM-DD') AS due_date, c.batch_id,
            r.return_ref, r.tax_year, t.tin, t.id AS taxpayer_id, t.name AS taxpayer_name, t.activity_code
       FROM (SELECT c.id FROM exam_case c ${w} ORDER BY ${ORDER[sort]} LIMIT $${params.length - 1} OFFSET $${params.length}) pg
       JOIN exam_case c ON c.id = pg.id
       JOIN tax_return r ON r.id = c.return_id
       JOIN taxpayer t ON t.id = c.taxpayer_id
       LEFT JOIN app_user u ON u.id = c.assignee_id
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
export async function* iterateCases(db: Db, f: CaseFilter, sort: CaseSort, chunk = 2000): AsyncGenerator<CaseRow[]> {
  for (let page = 1; ; page++) {
    const rows = await findCasePage(db, f, sort, page, chunk);
    if (rows.length) yield rows;
    if (rows.length < chunk) return;
  }
}

/** The case with its return, taxpayer, preparer, score and assignee, for the case screen. */
export interface CaseDetailRow {
  id: string;
  state: CaseState;
  assignee_id: string | null;
  assignee_name: string | null;
  risk_score: string;
  priority: string;
  amount_at_stake: string;
  opened_at: Date;
  updated_at: Date;
  closed_at: Date | null;
  due_date: string | null;
  outcome: string | null;
  adjusted_amount: string | null;
  taxpayer_id: string;
  tin: string;
  taxpayer_name: string;
  activity_code: string;
  return_id: string;
  return_ref: string;
  tax_year: number;
  batch_id: string;
  preparer_code: string | null;
  total_wages: string;
  total_interest: string;
  total_receipts: string;
  total_business_expenses: string;
  computed_income: string;
  reported_income: string | null;
  computed_deductions: string;
  reported_deductions: string | null;
  taxable_income: string;
  computed_tax: string;
  tax_withheld: string;
  computed_refund: string;
  reported_refund: string | null;
  profile_version: number;
  scored_at: Date;
  breakdown: unknown;
}

/** One case with everything the case screen shows about the return, or null. */
export async function findCaseDetail(db: Db, caseId: string): Promise<CaseDetailRow | null> {
  const r = await db.query(
    `SELECT c.id, c.state, c.assignee_id, u.display_name AS assignee_name, c.risk_score, c.priority, c.amount_at_stake,
            c.opened_at, c.updated_at, c.closed_at, to_char(c.due_date, 'YYYY-MM-DD') AS due_date, c.outcome, c.adjusted_amount,
            t.id AS taxpayer_id, t.tin, t.name AS taxpayer_name, t.activity_code,
            r.id AS return_id, r.return_ref, r.tax_year, r.batch_id, p.code AS preparer_code,
            r.total_wages, r.total_interest, r.total_receipts, r.total_business_expenses, r.computed_income, r.reported_income,
            r.computed_deductions, r.reported_deductions, r.taxable_income, r.computed_tax, r.tax_withheld, r.computed_refund, r.reported_refund,
            s.profile_version, s.scored_at, s.breakdown
       FROM exam_case c
       JOIN tax_return r ON r.id = c.return_id
       JOIN taxpayer t ON t.id = c.taxpayer_id
       JOIN return_score s ON s.id = c.score_id
       LEFT JOIN preparer p ON p.id = r.preparer_id
       LEFT JOIN app_user u ON u.id = c.assignee_id
      WHERE c.id = $1`,
    [caseId],
  );
  return r[0] ?? null;
}

/** The return's lines in filing order. */
export async function findLineItems(db: Db, returnId: string): Promise<{ line_no: number; line_code: string; amount: string }[]> {
  return db.query(`SELECT line_no, line_code, amount FROM line_item WHERE return_id = $1 ORDER BY line_no`, [returnId]);
}

/** A case event with its actor's name. */
export interface CaseEventRow {
  id: string;
  at: Date;
  kind: string;
  actor_name: string | null;
  from_state: CaseState | null;
  to_state: CaseState | null;
  detail: Record<string, unknown>;
}

/** The case's history, oldest first. */
export async function findCaseEvents(db: Db, caseId: string): Promise<CaseEventRow[]> {
  return db.query(
    `SELECT e.id::text AS id, e.at, e.kind, u.display_name AS actor_name, e.from_state, e.to_state, e.detail
       FROM case_event e LEFT JOIN app_user u ON u.id = e.actor_id
      WHERE e.case_id = $1 ORDER BY e.at, e.id`,
    [caseId],
  );
}

/** Display names of users by id (for history sentences naming examiners). */
export async function userNames(db: Db, ids: string[]): Promise<Map<string, string>> {
  if (!ids.length) return new Map();
  const rows: { id: string; display_name: string }[] = await db.query(`SELECT id, display_name FROM app_user WHERE id = ANY($1::uuid[])`, [ids]);
  return new Map(rows.map((r) => [r.id, r.display_name]));
}

/** A note with its author's name. */
export interface CaseNoteRow {
  id: string;
  at: Date;
  author_id: string;
  author_name: string;
  text: string;
}

/** The case's notes, oldest first. */
export async function findCaseNotes(db: Db, caseId: string): Promise<CaseNoteRow[]> {
  return db.query(
    `SELECT n.id::text AS id, n.at, n.author_id, u.display_name AS author_name, n.text
       FROM case_note n JOIN app_user u ON u.id = n.author_id
      WHERE n.case_id = $1 ORDER BY n.at, n.id`,
    [caseId],
  );
}

/** Appends a note; returns it with its author's name. */
export async function insertCaseNote(db: Db, caseId: string, authorId: string, text: string): Promise<CaseNoteRow> {
  const r = await db.query(
    `WITH n AS (INSERT INTO case_note (case_id, author_id, text) VALUES ($1, $2, $3) RETURNING id, at, author_id, text)
     SELECT n.id::text AS id, n.at, n.author_id, u.display_name AS author_name, n.text FROM n JOIN app_user u ON u.id = n.author_id`,
    [caseId, authorId, text],
  );
  return r[0];
}

/**
 * Letters kept with the case, from the letters feature's `letter` table when it exists
 * (the case screen works before that feature is installed, and after).
 */
export async function findCaseLetters(db: Db, caseId: string): Promise<{ id: string; kind: string; created_at: Date }[]> {
  const t = await db.query(`SELECT to_regclass('public.letter') IS NOT NULL AS present`);
  if (!t[0].present) return [];
  return db.query(`SELECT id::text AS id, kind, created_at FROM letter WHERE case_id = $1 ORDER BY created_at`, [caseId]);
}

/** The full TIN and taxpayer of a case, or null. */
export async function findCaseTin(db: Db, caseId: string): Promise<{ tin: string; taxpayer_id: string } | null> {
  const r = await db.query(`SELECT t.tin, t.id AS taxpayer_id FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [caseId]);
  return r[0] ?? null;
}

/** Active examiners, by name. */
export async function findExaminers(db: Db): Promise<{ id: string; username: string; display_name: string }[]> {
  return db.query(`SELECT id, username, display_name FROM app_user WHERE role = 'examiner' AND active ORDER BY display_name, username`);
}

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
              count(*) FILTER (WHERE c.state IN ('referred', 'closed_no_change', 'closed_adjusted') AND c.closed_at >= $1::date - 30)::int AS finished_30d
         FROM exam_case c
        WHERE c.assignee_id IS NOT NULL
        GROUP BY c.assignee_id)
     SELECT u.id, u.username, u.display_name,
            coalesce(per.assigned, 0) AS assigned, coalesce(per.in_review, 0) AS in_review, coalesce(per.awaiting_reply, 0) AS awaiting_reply,
            coalesce(per.overdue, 0) AS overdue, coalesce(per.finished_30d, 0) AS finished_30d
       FROM app_user u LEFT JOIN per ON per.assignee_id = u.id
      WHERE (u.role = 'examiner' AND u.active) OR coalesce(per.assigned + per.in_review + per.awaiting_reply, 0) > 0
      ORDER BY u.display_name, u.username`,
    [today],
  );
}

/** Open cases nobody holds. */
export async function countUnassigned(db: Db): Promise<number> {
  const r = await db.query(`SELECT count(*)::int AS n FROM exam_case WHERE state = 'open'`);
  return r[0].n;
}

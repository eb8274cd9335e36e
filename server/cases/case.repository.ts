/**
 * Queries on one case: what the case screen shows (the case with its return, lines,
 * history, notes and letters), the examiners one may assign to, and the writes of the case
 * workflow (lock, save, case events). Every case write goes through this file or
 * case-open.repository.ts.
 */
import type { EntityManager } from 'typeorm';
import type { CaseState } from '../../shared/cases';
import type { Db } from '../db/db';
import type { CaseEvent } from './case-event.entity';
import type { CaseNote } from './case-note.entity';
import { ExamCase } from './exam-case.entity';

/**
 * The case with its return, taxpayer, preparer, score and assignee, for the case screen: the
 * case's own fields under the entity's names (ExamCase), the rest beside them.
 */
export type CaseDetailRecord = Pick<
  ExamCase,
  | 'id'
  | 'state'
  | 'selection'
  | 'assigneeId'
  | 'riskScore'
  | 'priority'
  | 'amountAtStake'
  | 'openedAt'
  | 'updatedAt'
  | 'closedAt'
  | 'dueDate'
  | 'outcome'
  | 'adjustedAmount'
  | 'taxpayerId'
  | 'returnId'
  | 'batchId'
> & {
  assigneeName: string | null;
  tin: string;
  taxpayerName: string;
  activityCode: string;
  returnRef: string;
  taxYear: number;
  preparerCode: string | null;
  totalWages: string;
  totalInterest: string;
  totalReceipts: string;
  totalBusinessExpenses: string;
  computedIncome: string;
  reportedIncome: string | null;
  computedDeductions: string;
  reportedDeductions: string | null;
  taxableIncome: string;
  computedTax: string;
  taxWithheld: string;
  computedRefund: string;
  reportedRefund: string | null;
  profileVersion: number;
  scoredAt: Date;
  breakdown: unknown;
};

/** One case with everything the case screen shows about the return, or null. */
export async function findCaseDetail(db: Db, caseId: string): Promise<CaseDetailRecord | null> {
  const r = await db.query(
    `SELECT c.id, c.state, c.selection, c.assignee_id AS "assigneeId", u.display_name AS "assigneeName", c.risk_score AS "riskScore", c.priority,
            c.amount_at_stake AS "amountAtStake", c.opened_at AS "openedAt", c.updated_at AS "updatedAt", c.closed_at AS "closedAt",
            to_char(c.due_date, 'YYYY-MM-DD') AS "dueDate", c.outcome, c.adjusted_amount AS "adjustedAmount",
            t.id AS "taxpayerId", t.tin, t.name AS "taxpayerName", t.activity_code AS "activityCode",
            r.id AS "returnId", r.return_ref AS "returnRef", r.tax_year AS "taxYear", r.batch_id AS "batchId", p.code AS "preparerCode",
            r.total_wages AS "totalWages", r.total_interest AS "totalInterest", r.total_receipts AS "totalReceipts",
            r.total_business_expenses AS "totalBusinessExpenses", r.computed_income AS "computedIncome", r.reported_income AS "reportedIncome",
            r.computed_deductions AS "computedDeductions", r.reported_deductions AS "reportedDeductions", r.taxable_income AS "taxableIncome",
            r.computed_tax AS "computedTax", r.tax_withheld AS "taxWithheld", r.computed_refund AS "computedRefund", r.reported_refund AS "reportedRefund",
            s.profile_version AS "profileVersion", s.scored_at AS "scoredAt", s.breakdown
       FROM exam_case c
       JOIN tax_return r ON r.id = c.return_id
       JOIN taxpayer t ON t.id = c.taxpayer_id
       JOIN return_score s ON s.id = c.score_id AND s.tax_year = c.tax_year
       LEFT JOIN preparer p ON p.id = r.preparer_id
       LEFT JOIN app_user u ON u.id = c.assignee_id
      WHERE c.id = $1`,
    [caseId],
  );
  return r[0] ?? null;
}

/** The return's lines in filing order. */
export async function findLineItems(db: Db, returnId: string): Promise<{ lineNo: number; lineCode: string; amount: string }[]> {
  return db.query(`SELECT line_no AS "lineNo", line_code AS "lineCode", amount FROM line_item WHERE return_id = $1 ORDER BY line_no`, [returnId]);
}

/** A case event (the entity's fields) with its actor's name. */
export type CaseEventRecord = Pick<CaseEvent, 'id' | 'at' | 'kind' | 'detail'> & {
  actorName: string | null;
  fromState: CaseState | null;
  toState: CaseState | null;
};

/** The case's history, oldest first. */
export async function findCaseEvents(db: Db, caseId: string): Promise<CaseEventRecord[]> {
  return db.query(
    `SELECT e.id::text AS id, e.at, e.kind, u.display_name AS "actorName", e.from_state AS "fromState", e.to_state AS "toState", e.detail
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

/** A note (the entity's fields) with its author's name. */
export type CaseNoteRecord = Pick<CaseNote, 'id' | 'at' | 'authorId' | 'text'> & { authorName: string };

/** The case's notes, oldest first. */
export async function findCaseNotes(db: Db, caseId: string): Promise<CaseNoteRecord[]> {
  return db.query(
    `SELECT n.id::text AS id, n.at, n.author_id AS "authorId", u.display_name AS "authorName", n.text
       FROM case_note n JOIN app_user u ON u.id = n.author_id
      WHERE n.case_id = $1 ORDER BY n.at, n.id`,
    [caseId],
  );
}

/** Appends a note; returns it with its author's name. */
export async function insertCaseNote(db: Db, caseId: string, authorId: string, text: string): Promise<CaseNoteRecord> {
  const r = await db.query(
    `WITH n AS (INSERT INTO case_note (case_id, author_id, text) VALUES ($1, $2, $3) RETURNING id, at, author_id, text)
     SELECT n.id::text AS id, n.at, n.author_id AS "authorId", u.display_name AS "authorName", n.text FROM n JOIN app_user u ON u.id = n.author_id`,
    [caseId, authorId, text],
  );
  return r[0];
}

/**
 * Letters kept with the case, from the letters feature's `letter` table when it exists
 * (the case screen works before that feature is installed, and after).
 */
export async function findCaseLetters(db: Db, caseId: string): Promise<{ id: string; kind: string; createdAt: Date }[]> {
  const t = await db.query(`SELECT to_regclass('public.letter') IS NOT NULL AS present`);
  if (!t[0].present) return [];
  return db.query(`SELECT id::text AS id, kind, created_at AS "createdAt" FROM letter WHERE case_id = $1 ORDER BY created_at`, [caseId]);
}

/** The full TIN and taxpayer of a case, or null. */
export async function findCaseTin(db: Db, caseId: string): Promise<{ tin: string; taxpayerId: string } | null> {
  const r = await db.query(`SELECT t.tin, t.id AS "taxpayerId" FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [caseId]);
  return r[0] ?? null;
}

/** Active examiners, by name. */
export async function findExaminers(db: Db): Promise<{ id: string; username: string; displayName: string }[]> {
  return db.query(`SELECT id, username, display_name AS "displayName" FROM app_user WHERE role = 'examiner' AND active ORDER BY display_name, username`);
}

/** Loads a case FOR UPDATE inside a transaction, or null. */
export function lockCaseRow(m: EntityManager, caseId: string): Promise<ExamCase | null> {
  return m.getRepository(ExamCase).createQueryBuilder('c').setLock('pessimistic_write').where('c.id = :id', { id: caseId }).getOne();
}

/** Stores a changed case (inside the transaction that locked it). */
export async function saveCase(m: EntityManager, c: ExamCase): Promise<void> {
  await m.getRepository(ExamCase).save(c);
}

/** Appends a case event. */
export async function insertCaseEvent(
  m: EntityManager,
  e: { caseId: string; actorId: string | null; kind: string; detail: Record<string, unknown>; from: CaseState | null; to: CaseState | null },
): Promise<void> {
  await m.query(`INSERT INTO case_event (case_id, actor_id, kind, from_state, to_state, detail) VALUES ($1, $2, $3, $4, $5, $6::jsonb)`, [
    e.caseId,
    e.actorId,
    e.kind,
    e.from,
    e.to,
    JSON.stringify(e.detail),
  ]);
}

/** A taxpayer's full TIN, or null. */
export async function findTaxpayerTin(db: Db, taxpayerId: string): Promise<string | null> {
  const r: { tin: string }[] = await db.query(`SELECT tin FROM taxpayer WHERE id = $1`, [taxpayerId]);
  return r.length ? String(r[0].tin) : null;
}

/** A user one may assign a case to, as far as the rule needs: role, active, name. */
export async function findAssignee(db: Db, userId: string): Promise<{ id: string; role: string; active: boolean; displayName: string } | null> {
  const r: { id: string; role: string; active: boolean; display_name: string }[] = await db.query(
    `SELECT id, role, active, display_name FROM app_user WHERE id = $1`,
    [userId],
  );
  return r.length ? { id: r[0].id, role: r[0].role, active: r[0].active, displayName: r[0].display_name } : null;
}

/** One of the taxpayer's other returns with its case, if any (RelatedReturn in shared/case-api.ts). */
export interface RelatedReturnRecord {
  returnId: string;
  returnRef: string;
  taxYear: number;
  superseded: boolean;
  caseId: string | null;
  state: CaseState | null;
  outcome: string | null;
  adjustedAmount: string | null;
  closedAt: Date | null;
}

/** The taxpayer's returns on file other than `returnId`, newest year first, each with its case if one was opened. */
export async function findTaxpayerOtherReturns(db: Db, taxpayerId: string, returnId: string): Promise<RelatedReturnRecord[]> {
  return db.query(
    `SELECT r.id AS "returnId", r.return_ref AS "returnRef", r.tax_year::int AS "taxYear", r.superseded,
            c.id AS "caseId", c.state, c.outcome, c.adjusted_amount AS "adjustedAmount", c.closed_at AS "closedAt"
       FROM tax_return r
       LEFT JOIN exam_case c ON c.return_id = r.id
      WHERE r.taxpayer_id = $1 AND r.id <> $2
      ORDER BY r.tax_year DESC, r.return_ref`,
    [taxpayerId, returnId],
  );
}

/** A case on another return of the same preparer in the same batch. */
export interface PreparerCaseRecord {
  caseId: string;
  returnRef: string;
  taxYear: number;
  taxpayerName: string;
  state: CaseState;
  riskScore: string;
  total: number;
}

/**
 * The other cases opened in `returnId`'s batch on returns the same preparer filed, highest
 * priority first, at most `limit`; each row carries the count of all of them (`total`).
 * Empty for a self-prepared return.
 */
export async function findPreparerOtherCases(db: Db, returnId: string, limit: number): Promise<PreparerCaseRecord[]> {
  return db.query(
    `SELECT c.id AS "caseId", r.return_ref AS "returnRef", r.tax_year::int AS "taxYear", t.name AS "taxpayerName", c.state,
            c.risk_score AS "riskScore", count(*) OVER ()::int AS total
       FROM tax_return me
       JOIN tax_return r ON r.batch_id = me.batch_id AND r.preparer_id = me.preparer_id AND r.id <> me.id
       JOIN exam_case c ON c.return_id = r.id
       JOIN taxpayer t ON t.id = r.taxpayer_id
      WHERE me.id = $1 AND me.preparer_id IS NOT NULL
      ORDER BY c.priority DESC, c.id
      LIMIT $2`,
    [returnId, limit],
  );
}

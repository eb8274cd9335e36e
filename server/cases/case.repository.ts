/**
 * Queries on one case: what the case screen shows (the case with its return, lines,
 * history, notes and letters), the examiners one may assign to, and the writes of the case
 * workflow (lock, save, case events). Every case write goes through this file or
 * case-open.repository.ts.
 */
import type { EntityManager } from 'typeorm';
import type { CaseState } from '../../shared/cases';
import type { Db } from '../db/db';
import { ExamCase } from './exam-case.entity';

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

/** Loads a case FOR UPDATE inside a transaction, or null. */
export function lockCaseRow(m: EntityManager, caseId: string): Promise<ExamCase | null> {
  return m.getRepository(ExamCase).createQueryBuilder('c').setLock('pessimistic_write').where('c.id = :id', { id: caseId }).getOne();
}

/** Stores a changed case (inside the transaction that locked it). */
export async function saveCase(m: EntityManager, c: ExamCase): Promise<void> {
  await m.getRepository(ExamCase).save(c);
}

/** Appends a case event. */
export async function insertCaseEvent(m: EntityManager, e: { caseId: string; actorId: string | null; kind: string; detail: Record<string, unknown>; from: CaseState | null; to: CaseState | null }): Promise<void> {
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
  const r: { id: string; role: string; active: boolean; display_name: string }[] = await db.query(`SELECT id, role, active, display_name FROM app_user WHERE id = $1`, [userId]);
  return r.length ? { id: r[0].id, role: r[0].role, active: r[0].active, displayName: r[0].display_name } : null;
}

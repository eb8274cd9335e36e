/**
 * SQL behind assessment deadlines (issue 13): the facts the rule in
 * shared/returns/assessment-deadline.ts needs per case, and the stored result on exam_case
 * (assess_by, assess_basis), which the queue filters and sorts on through idx_case_assess_by.
 * The rule itself is pure, so the store here applies it ({@link refreshDeadlines}) and case
 * writes (case-open.repository.ts) can keep deadlines in their own transaction.
 */
import { assessmentDeadline, type AssessmentDeadline } from '../../shared/returns/assessment-deadline';
import { STATEMENT_KIND_LINE } from '../../shared/returns/line-codes';
import { centsFromNumeric } from '../../shared/returns/money';
import type { Db } from '../db/db';

/** What the rule needs about one case's return; money as numeric text. */
export interface DeadlineFacts {
  caseId: string;
  taxYear: number;
  /** The filing date: the return's filed_on, or else the date its batch was received. */
  filedOn: string | null;
  /** Gross income the return reported: wages + interest + business receipts. */
  grossIncome: string;
  /** Income third-party statements show beyond the return's own lines, summed over kinds. */
  statementExcess: string;
  /** Income the examiner's corrected figures add on the income lines (case_correction), summed. */
  correctedExcess: string;
}

/** The rule applied to one case's facts. */
export function deadlineOf(f: DeadlineFacts): AssessmentDeadline {
  return assessmentDeadline({
    taxYear: Number(f.taxYear),
    filedOn: f.filedOn,
    reportedIncomeCents: centsFromNumeric(f.grossIncome) ?? 0,
    // Statements and corrections may both see the same missing income: the larger counts, not the sum.
    omittedIncomeCents: Math.max(centsFromNumeric(f.statementExcess) ?? 0, centsFromNumeric(f.correctedExcess) ?? 0),
  });
}

/** Computes and stores the deadlines of some cases (inside the caller's transaction when given one). */
export async function refreshDeadlines(db: Db, caseIds: string[]): Promise<number> {
  let stored = 0;
  for (let i = 0; i < caseIds.length; i += 5000) {
    const facts = await findDeadlineFacts(db, caseIds.slice(i, i + 5000));
    stored += facts.length;
    await storeDeadlines(
      db,
      facts.map((f) => {
        const d = deadlineOf(f);
        return { caseId: f.caseId, assessBy: d.assessBy, basis: d.basis };
      }),
    );
  }
  return stored;
}

/**
 * The facts for some cases. Statements are matched by TIN and tax year, each kind against
 * its income line (shared/returns/line-codes.ts STATEMENT_KIND_LINE); only the part of a
 * kind's statements above what the return reported counts as left out. The examiner's
 * corrected figures (case_correction) count what they raise on the same income lines.
 */
export async function findDeadlineFacts(db: Db, caseIds: string[]): Promise<DeadlineFacts[]> {
  if (!caseIds.length) return [];
  return db.query(
    `SELECT c.id AS "caseId", r.tax_year AS "taxYear",
            to_char(coalesce(r.filed_on, b.created_at::date), 'YYYY-MM-DD') AS "filedOn",
            (r.total_wages + r.total_interest + r.total_receipts)::text AS "grossIncome",
            coalesce((SELECT sum(greatest(0, s.amount - CASE s.kind WHEN 'wages' THEN r.total_wages WHEN 'interest' THEN r.total_interest ELSE r.total_receipts END))
                        FROM (SELECT kind, sum(amount) AS amount FROM third_party_statement st
                               WHERE st.tin = t.tin AND st.tax_year = r.tax_year GROUP BY kind) s), 0)::text AS "statementExcess",
            coalesce((SELECT sum(greatest(0, cc.corrected_amount - cc.filed_amount)) FROM case_correction cc
                       WHERE cc.case_id = c.id AND cc.line_code = ANY($2::text[])), 0)::text AS "correctedExcess"
       FROM exam_case c
       JOIN tax_return r ON r.id = c.return_id
       JOIN taxpayer t ON t.id = c.taxpayer_id
       JOIN filing_batch b ON b.id = r.batch_id
      WHERE c.id = ANY($1::uuid[])`,
    [caseIds, Object.values(STATEMENT_KIND_LINE)],
  );
}

/** Stores computed deadlines on their cases. */
export async function storeDeadlines(db: Db, rows: { caseId: string; assessBy: string | null; basis: string }[]): Promise<void> {
  if (!rows.length) return;
  await db.query(
    `UPDATE exam_case c SET assess_by = u.assess_by, assess_basis = u.basis
       FROM unnest($1::uuid[], $2::date[], $3::text[]) AS u(id, assess_by, basis)
      WHERE c.id = u.id`,
    [rows.map((r) => r.caseId), rows.map((r) => r.assessBy), rows.map((r) => r.basis)],
  );
}

/** Ids of cases with no stored deadline yet (opened before the deadline was kept), at most `limit`. */
export async function findCasesWithoutDeadline(db: Db, limit = 5000): Promise<string[]> {
  const rows: { id: string }[] = await db.query(`SELECT id FROM exam_case WHERE assess_basis IS NULL LIMIT $1`, [limit]);
  return rows.map((r) => r.id);
}

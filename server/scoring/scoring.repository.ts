/**
 * The queries scoring runs. Large aggregates (digit counts of a preparer's pool, amounts
 * shared between a preparer's clients) are done in SQL so a million line items never sit in
 * the worker's memory at once.
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { StatementKind } from '../../shared/returns/line-codes';
import type { LineCode } from '../../shared/returns/line-codes';

type Db = DataSource | EntityManager;

/** First significant digit of a numeric amount, in SQL (zero amounts must be filtered out). */
const FIRST_DIGIT_SQL = `substr(ltrim(replace(abs(li.amount)::text, '.', ''), '0'), 1, 1)::int`;
/** Lines that are bookkeeping figures (totals and the refund are derived from others). */
const ITEMISED_SQL = `li.line_code NOT LIKE 'tot.%' AND li.line_code <> 'tax.refund' AND li.amount <> 0`;

// The active-profile query has one home, with the other profile queries.
export { activeProfileVersion } from './scoring-profile.repository';

/** Return ids of a batch in id order. */
export async function batchReturnIds(db: Db, batchId: string): Promise<string[]> {
  const rows: { id: string }[] = await db.query(`SELECT id FROM tax_return WHERE batch_id = $1 ORDER BY id`, [batchId]);
  return rows.map((r) => r.id);
}

/** Income, charity and medical of each return of the batch, for peer percentiles. */
export async function batchDeductionFigures(db: Db, batchId: string): Promise<{ income: number; charity: number; medical: number }[]> {
  const rows: { income: string; charity: string; medical: string }[] = await db.query(
    `SELECT (r.computed_income * 100)::bigint AS income,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'ded.charity'), 0) * 100 AS charity,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'ded.medical'), 0) * 100 AS medical
       FROM tax_return r LEFT JOIN line_item li ON li.return_id = r.id AND li.line_code IN ('ded.charity', 'ded.medical')
      WHERE r.batch_id = $1
      GROUP BY r.id`,
    [batchId],
  );
  return rows.map((r) => ({ income: Number(r.income), charity: Math.round(Number(r.charity)), medical: Math.round(Number(r.medical)) }));
}

/** First-digit counts of every current return of each preparer that has returns in the batch. */
export async function preparerDigitCounts(db: Db, batchId: string): Promise<Map<string, number[]>> {
  const rows: { preparer_id: string; d: number; n: string }[] = await db.query(
    `WITH p AS (SELECT DISTINCT preparer_id FROM tax_return WHERE batch_id = $1 AND preparer_id IS NOT NULL)
     SELECT r.preparer_id, ${FIRST_DIGIT_SQL} AS d, count(*) AS n
       FROM p JOIN tax_return r ON r.preparer_id = p.preparer_id AND NOT r.superseded
       JOIN line_item li ON li.return_id = r.id
      WHERE ${ITEMISED_SQL}
      GROUP BY 1, 2`,
    [batchId],
  );
  const out = new Map<string, number[]>();
  for (const r of rows) {
    const c = out.get(r.preparer_id) ?? new Array(9).fill(0);
    if (r.d >= 1 && r.d <= 9) c[r.d - 1] += Number(r.n);
    out.set(r.preparer_id, c);
  }
  return out;
}

/** First-digit counts per line code across the batch (the pooled line-code test). */
export async function lineCodeDigitCounts(db: Db, batchId: string): Promise<Map<string, number[]>> {
  const rows: { line_code: string; d: number; n: string }[] = await db.query(
    `SELECT li.line_code, ${FIRST_DIGIT_SQL} AS d, count(*) AS n
       FROM tax_return r JOIN line_item li ON li.return_id = r.id
      WHERE r.batch_id = $1 AND ${ITEMISED_SQL}
      GROUP BY 1, 2`,
    [batchId],
  );
  const out = new Map<string, number[]>();
  for (const r of rows) {
    const c = out.get(r.line_code) ?? new Array(9).fill(0);
    if (r.d >= 1 && r.d <= 9) c[r.d - 1] += Number(r.n);
    out.set(r.line_code, c);
  }
  return out;
}

/** Amounts (absolute cents, >= min) that appear on returns of two or more clients of one preparer. */
export async function preparerSharedAmounts(db: Db, batchId: string, minCents: number): Promise<Map<string, number[]>> {
  // min <> max instead of count(DISTINCT): a hash aggregate, no sort of every amount.
  const rows: { preparer_id: string; cents: string }[] = await db.query(
    `WITH p AS (SELECT DISTINCT preparer_id FROM tax_return WHERE batch_id = $1 AND preparer_id IS NOT NULL)
     SELECT r.preparer_id, (abs(li.amount) * 100)::bigint AS cents
       FROM p JOIN tax_return r ON r.preparer_id = p.preparer_id AND NOT r.superseded
       JOIN line_item li ON li.return_id = r.id
      WHERE ${ITEMISED_SQL} AND abs(li.amount) >= $2
      GROUP BY 1, 2
     HAVING min(r.taxpayer_id::text) <> max(r.taxpayer_id::text)`,
    [batchId, minCents / 100],
  );
  const out = new Map<string, number[]>();
  for (const r of rows) {
    const list = out.get(r.preparer_id) ?? [];
    list.push(Number(r.cents));
    out.set(r.preparer_id, list);
  }
  return out;
}

/** One return to score, with what is on file about it. */
export interface ReturnRow {
  id: string;
  taxpayerId: string;
  preparerId: string | null;
  taxYear: number;
  activityCode: string;
  tin: string;
}

/** Returns of a batch in [fromId, toId] that have no score yet under the version. */
export async function unscoredReturns(db: Db, batchId: string, version: number, fromId: string, toId: string): Promise<ReturnRow[]> {
  const rows = await db.query(
    `SELECT r.id, r.taxpayer_id, r.preparer_id, r.tax_year, t.activity_code, t.tin
       FROM tax_return r JOIN taxpayer t ON t.id = r.taxpayer_id
      WHERE r.batch_id = $1 AND r.id BETWEEN $2 AND $3
        AND NOT EXISTS (SELECT 1 FROM return_score s WHERE s.return_id = r.id AND s.profile_version = $4)
      ORDER BY r.id`,
    [batchId, fromId, toId, version],
  );
  return rows.map((r: Record<string, string | number | null>) => ({
    id: r.id as string,
    taxpayerId: r.taxpayer_id as string,
    preparerId: r.preparer_id as string | null,
    taxYear: Number(r.tax_year),
    activityCode: r.activity_code as string,
    tin: String(r.tin),
  }));
}

/** Line items of many returns, grouped by return, in line order. */
export async function linesOf(db: Db, returnIds: string[]): Promise<Map<string, { code: LineCode; cents: number }[]>> {
  const rows: { return_id: string; line_code: LineCode; cents: string }[] = await db.query(
    `SELECT return_id, line_code, (amount * 100)::bigint AS cents FROM line_item WHERE return_id = ANY($1::uuid[]) ORDER BY return_id, line_no`,
    [returnIds],
  );
  const out = new Map<string, { code: LineCode; cents: number }[]>();
  for (const r of rows) {
    const list = out.get(r.return_id) ?? [];
    list.push({ code: r.line_code, cents: Number(r.cents) });
    out.set(r.return_id, list);
  }
  return out;
}

/** Third-party statements for these TINs (all years). */
export async function statementsOf(db: Db, tins: string[]): Promise<Map<string, { taxYear: number; kind: StatementKind; cents: number }[]>> {
  const rows: { tin: string; tax_year: number; kind: StatementKind; cents: string }[] = await db.query(
    `SELECT tin, tax_year, kind, (amount * 100)::bigint AS cents FROM third_party_statement WHERE tin = ANY($1::char(9)[])`,
    [tins],
  );
  const out = new Map<string, { taxYear: number; kind: StatementKind; cents: number }[]>();
  for (const r of rows) {
    const key = String(r.tin);
    const list = out.get(key) ?? [];
    list.push({ taxYear: Number(r.tax_year), kind: r.kind, cents: Number(r.cents) });
    out.set(key, list);
  }
  return out;
}

/** Totals of every current return of these taxpayers (their history on file). */
export async function historyOf(db: Db, taxpayerIds: string[]) {
  const rows: Record<string, string>[] = await db.query(
    `SELECT id, taxpayer_id, tax_year,
            (total_wages * 100)::bigint AS wages, (total_interest * 100)::bigint AS interest,
            (total_receipts * 100)::bigint AS receipts, (total_business_expenses * 100)::bigint AS expenses,
            (computed_income * 100)::bigint AS income, (computed_deductions * 100)::bigint AS deductions,
            (taxable_income * 100)::bigint AS taxable, (computed_tax * 100)::bigint AS tax,
            (tax_withheld * 100)::bigint AS withheld, (computed_refund * 100)::bigint AS refund
       FROM tax_return WHERE taxpayer_id = ANY($1::uuid[]) AND NOT superseded`,
    [taxpayerIds],
  );
  return rows.map((r) => ({
    returnId: r.id,
    taxpayerId: r.taxpayer_id,
    taxYear: Number(r.tax_year),
    wages: Number(r.wages),
    interest: Number(r.interest),
    receipts: Number(r.receipts),
    expenses: Number(r.expenses),
    income: Number(r.income),
    deductions: Number(r.deductions),
    taxable: Number(r.taxable),
    tax: Number(r.tax),
    withheld: Number(r.withheld),
    refund: Number(r.refund),
  }));
}

/** First-digit counts of each taxpayer's itemised amounts over all their current returns. */
export async function taxpayerDigitCounts(db: Db, taxpayerIds: string[]): Promise<Map<string, number[]>> {
  const rows: { taxpayer_id: string; d: number; n: string }[] = await db.query(
    `SELECT r.taxpayer_id, ${FIRST_DIGIT_SQL} AS d, count(*) AS n
       FROM tax_return r JOIN line_item li ON li.return_id = r.id
      WHERE r.taxpayer_id = ANY($1::uuid[]) AND NOT r.superseded AND ${ITEMISED_SQL}
      GROUP BY 1, 2`,
    [taxpayerIds],
  );
  const out = new Map<string, number[]>();
  for (const r of rows) {
    const c = out.get(r.taxpayer_id) ?? new Array(9).fill(0);
    if (r.d >= 1 && r.d <= 9) c[r.d - 1] += Number(r.n);
    out.set(r.taxpayer_id, c);
  }
  return out;
}

/**
 * The queries scoring runs. Large aggregates (digit counts of a preparer's pool, amounts
 * shared between a preparer's clients) are done in SQL so a million line items never sit in
 * the worker's memory at once.
 */
import type { EntityManager } from 'typeorm';
import type { StatementKind, LineCode } from '../../shared/returns/line-codes';
import type { PeerFigures } from '../../shared/scoring/factors';
import type { Db } from '../db/db';
import { returnedRows } from '../db/returned-rows';

/** First significant digit of a numeric amount, in SQL (zero amounts must be filtered out). */
const FIRST_DIGIT_SQL = `substr(ltrim(replace(abs(li.amount)::text, '.', ''), '0'), 1, 1)::int`;
/**
 * The itemised, non-zero lines (alias `li`): totals and the refund are bookkeeping figures
 * derived from other lines. The digit pools of the analysis screen read the same lines.
 */
export const ITEMISED_SQL = `li.line_code NOT LIKE 'tot.%' AND li.line_code <> 'tax.refund' AND li.amount <> 0`;

// The active-profile query has one home, with the other profile queries.
export { activeProfileVersion } from './scoring-profile.repository';

/** Return ids of a batch in id order. */
export async function batchReturnIds(db: Db, batchId: string): Promise<string[]> {
  const rows: { id: string }[] = await db.query(`SELECT id FROM tax_return WHERE batch_id = $1 ORDER BY id`, [batchId]);
  return rows.map((r) => r.id);
}

/** Income, charity, medical, receipts and each business cost line of each return of the batch, for peer percentiles. */
export async function batchDeductionFigures(db: Db, batchId: string): Promise<(PeerFigures & { id: string })[]> {
  const rows: Record<string, string>[] = await db.query(
    `SELECT r.id, r.taxpayer_id, r.tax_year, (r.computed_income * 100)::bigint AS income,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'ded.charity'), 0) * 100 AS charity,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'ded.medical'), 0) * 100 AS medical,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'inc.business.receipts'), 0) * 100 AS receipts,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'exp.business.supplies'), 0) * 100 AS supplies,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'exp.business.vehicle'), 0) * 100 AS vehicle,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'exp.business.travel'), 0) * 100 AS travel,
            coalesce(sum(li.amount) FILTER (WHERE li.line_code = 'exp.business.other'), 0) * 100 AS other
       FROM tax_return r LEFT JOIN line_item li ON li.return_id = r.id
        AND li.line_code IN ('ded.charity', 'ded.medical', 'inc.business.receipts', 'exp.business.supplies', 'exp.business.vehicle', 'exp.business.travel', 'exp.business.other')
      WHERE r.batch_id = $1
      GROUP BY r.id`,
    [batchId],
  );
  const n = (x: string) => Math.round(Number(x));
  return rows.map((r) => ({
    id: r.id,
    taxpayerId: r.taxpayer_id,
    taxYear: Number(r.tax_year),
    income: Number(r.income),
    charity: n(r.charity),
    medical: n(r.medical),
    receipts: n(r.receipts),
    costs: {
      'exp.business.supplies': n(r.supplies),
      'exp.business.vehicle': n(r.vehicle),
      'exp.business.travel': n(r.travel),
      'exp.business.other': n(r.other),
    },
  }));
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
        AND NOT EXISTS (SELECT 1 FROM return_score s WHERE s.return_id = r.id AND s.profile_version = $4 AND s.tax_year = r.tax_year)
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

/**
 * Gives the caller's transaction more sort/hash memory than PostgreSQL's default 4 MB, so the
 * batch-wide aggregates over a million line items stay in memory. Lasts until the
 * transaction ends.
 */
export async function raiseWorkMem(m: EntityManager): Promise<void> {
  await m.query(`SET LOCAL work_mem = '64MB'`);
}

/**
 * The batch's amounts as slots: one per (return, line code, absolute amount), so a bill
 * entered twelve times on one line counts once, with whether the return is a whole-unit
 * filer (no itemised amount with cents, at least three amounts). A temporary table for the
 * context pass's aggregates, dropped at the end of the caller's transaction.
 */
export async function createBatchSlots(m: EntityManager, batchId: string): Promise<void> {
  await m.query(
    `CREATE TEMP TABLE batch_slot ON COMMIT DROP AS
     WITH w AS (
       SELECT li.return_id, bool_and(li.amount = trunc(li.amount)) AND count(*) >= 3 AS whole
         FROM tax_return r JOIN line_item li ON li.return_id = r.id
        WHERE r.batch_id = $1 AND NOT r.superseded AND ${ITEMISED_SQL}
        GROUP BY 1)
     SELECT r.id AS return_id, r.taxpayer_id, r.preparer_id, li.line_code, abs(li.amount) AS a, count(*)::int AS c, w.whole,
            ${FIRST_DIGIT_SQL} AS d
       FROM tax_return r JOIN line_item li ON li.return_id = r.id JOIN w ON w.return_id = r.id
      WHERE r.batch_id = $1 AND NOT r.superseded AND ${ITEMISED_SQL}
      GROUP BY r.id, r.taxpayer_id, r.preparer_id, li.line_code, abs(li.amount), w.whole`,
    [batchId],
  );
}

/** Per line code: returns carrying it, and returns with `counts`-many equal amounts on it (a schedule). */
export async function slotRecurrence(m: EntityManager, counts: readonly number[]): Promise<Record<string, { returns: number; recurring: number }>> {
  const rows: { line_code: string; returns: string; recurring: string }[] = await m.query(
    `SELECT line_code, count(DISTINCT return_id) AS returns, count(DISTINCT return_id) FILTER (WHERE c = ANY($1::int[])) AS recurring FROM batch_slot GROUP BY 1`,
    [counts],
  );
  return Object.fromEntries(rows.map((r) => [r.line_code, { returns: Number(r.returns), recurring: Number(r.recurring) }]));
}

/** Yearly totals of equal-amount groups (two or more) on the given lines, per return and line (cents). */
export async function slotRecurringTotals(m: EntityManager, codes: readonly string[]): Promise<Map<string, Record<string, number>>> {
  const rows: { return_id: string; line_code: string; cents: string }[] = await m.query(
    `SELECT return_id, line_code, (sum(a * c) * 100)::bigint AS cents FROM batch_slot WHERE c >= 2 AND line_code = ANY($1::text[]) GROUP BY 1, 2`,
    [codes],
  );
  const out = new Map<string, Record<string, number>>();
  for (const r of rows) {
    const e = out.get(r.return_id) ?? {};
    e[r.line_code] = Number(r.cents);
    out.set(r.return_id, e);
  }
  return out;
}

/** Per line code: amounts >= 100 and round hundreds among them, for whole-unit filers and filers with cents. */
export async function slotRoundRates(m: EntityManager): Promise<Record<string, [number, number, number, number]>> {
  const rows: { line_code: string; wn: string; wr: string; cn: string; cr: string }[] = await m.query(
    `SELECT line_code,
            count(*) FILTER (WHERE whole) AS wn, count(*) FILTER (WHERE whole AND floor(a) % 100 = 0) AS wr,
            count(*) FILTER (WHERE NOT whole) AS cn, count(*) FILTER (WHERE NOT whole AND floor(a) % 100 = 0) AS cr
       FROM batch_slot WHERE a >= 100 GROUP BY 1`,
  );
  return Object.fromEntries(rows.map((r) => [r.line_code, [Number(r.wn), Number(r.wr), Number(r.cn), Number(r.cr)]]));
}

/** Amounts (>= min cents) on two or more slots: [cents, slots of whole-unit filers, slots of filers with cents, taxpayers]; and all slots. */
export async function slotPopularity(m: EntityManager, minCents: number): Promise<{ popular: [number, number, number, number][]; slots: [number, number] }> {
  const rows: { cents: string; w: string; c: string; t: string }[] = await m.query(
    `SELECT (a * 100)::bigint AS cents, count(*) FILTER (WHERE whole) AS w, count(*) FILTER (WHERE NOT whole) AS c, count(DISTINCT taxpayer_id) AS t
       FROM batch_slot WHERE a >= $1 GROUP BY a HAVING count(*) >= 2`,
    [minCents / 100],
  );
  const all: { w: string; c: string }[] = await m.query(
    `SELECT count(*) FILTER (WHERE whole) AS w, count(*) FILTER (WHERE NOT whole) AS c FROM batch_slot WHERE a >= $1`,
    [minCents / 100],
  );
  return { popular: rows.map((r) => [Number(r.cents), Number(r.w), Number(r.c), Number(r.t)]), slots: [Number(all[0].w), Number(all[0].c)] };
}

/**
 * Folds (key, line code, first digit, count) rows into first-digit counts per key and line
 * code (9 counts, digits 1 to 9); a digit outside 1..9 is left out.
 */
function digitCountsBy<R extends { line_code: string; d: number; n: string }>(rows: R[], keyOf: (r: R) => string): Map<string, Record<string, number[]>> {
  const out = new Map<string, Record<string, number[]>>();
  for (const r of rows) {
    if (r.d < 1 || r.d > 9) continue;
    const key = keyOf(r);
    const t = out.get(key) ?? {};
    (t[r.line_code] ??= new Array(9).fill(0))[r.d - 1] += Number(r.n);
    out.set(key, t);
  }
  return out;
}

/** First-digit counts per line code over the batch's slots, and per preparer and line code. */
export async function slotDigitCounts(m: EntityManager): Promise<{ lineCodes: Record<string, number[]>; preparers: Record<string, Record<string, number[]>> }> {
  const rows: { preparer_id: string | null; line_code: string; d: number; n: string }[] = await m.query(
    `SELECT preparer_id, line_code, d, count(*) AS n FROM batch_slot WHERE d BETWEEN 1 AND 9 GROUP BY 1, 2, 3`,
  );
  const lineCodes: Record<string, number[]> = {};
  const preparers: Record<string, Record<string, number[]>> = {};
  for (const r of rows) {
    const n = Number(r.n);
    (lineCodes[r.line_code] ??= new Array(9).fill(0))[r.d - 1] += n;
    if (r.preparer_id) ((preparers[r.preparer_id] ??= {})[r.line_code] ??= new Array(9).fill(0))[r.d - 1] += n;
  }
  return { lineCodes, preparers };
}

/** First-digit counts per taxpayer and line code over the batch's slots (the clients a preparer's null pools are drawn from). */
export async function slotTaxpayerDigitCounts(m: EntityManager): Promise<Record<string, number[]>[]> {
  const rows: { taxpayer_id: string; line_code: string; d: number; n: string }[] = await m.query(
    `SELECT taxpayer_id, line_code, d, count(*) AS n FROM batch_slot WHERE d BETWEEN 1 AND 9 GROUP BY 1, 2, 3`,
  );
  return [...digitCountsBy(rows, (r) => r.taxpayer_id).values()];
}

/**
 * First-digit counts per line code of the given taxpayers' returns in one batch, per
 * preparer (key `taxpayerId|preparerId`), counted as the batch's slots are (one per return,
 * line code and amount): what leaves a whole client out of their preparer's pool.
 */
export async function taxpayerPreparerDigitCounts(db: Db, batchId: string, taxpayerIds: string[]): Promise<Map<string, Record<string, number[]>>> {
  const rows: { taxpayer_id: string; preparer_id: string; line_code: string; d: number; n: string }[] = await db.query(
    `WITH s AS (SELECT DISTINCT r.taxpayer_id, r.preparer_id, r.id, li.line_code, abs(li.amount) AS a, ${FIRST_DIGIT_SQL} AS d
                  FROM tax_return r JOIN line_item li ON li.return_id = r.id
                 WHERE r.batch_id = $1 AND r.taxpayer_id = ANY($2::uuid[]) AND r.preparer_id IS NOT NULL AND NOT r.superseded AND ${ITEMISED_SQL})
     SELECT taxpayer_id, preparer_id, line_code, d, count(*) AS n FROM s WHERE d BETWEEN 1 AND 9 GROUP BY 1, 2, 3, 4`,
    [batchId, taxpayerIds],
  );
  return digitCountsBy(rows, (r) => `${r.taxpayer_id}|${r.preparer_id}`);
}

/** Per preparer: distinct taxpayers in the batch, and amounts (>= min) carried by two or more of them; and all taxpayers. */
export async function slotPreparerSharing(
  m: EntityManager,
  minCents: number,
): Promise<{ clients: Record<string, number>; shared: Record<string, number[]>; taxpayers: number }> {
  const clients: { preparer_id: string; n: string }[] = await m.query(
    `SELECT preparer_id, count(DISTINCT taxpayer_id) AS n FROM batch_slot WHERE preparer_id IS NOT NULL GROUP BY 1`,
  );
  const shared: { preparer_id: string; cents: string }[] = await m.query(
    `SELECT preparer_id, (a * 100)::bigint AS cents FROM batch_slot WHERE preparer_id IS NOT NULL AND a >= $1
      GROUP BY 1, a HAVING min(taxpayer_id::text) <> max(taxpayer_id::text)`,
    [minCents / 100],
  );
  const all: { n: string }[] = await m.query(`SELECT count(DISTINCT taxpayer_id) AS n FROM batch_slot`);
  const out: Record<string, number[]> = {};
  for (const r of shared) (out[r.preparer_id] ??= []).push(Number(r.cents));
  return { clients: Object.fromEntries(clients.map((c) => [c.preparer_id, Number(c.n)])), shared: out, taxpayers: Number(all[0].n) };
}

/**
 * First-digit counts per taxpayer and line code over all their current returns (one per
 * return, code and amount), for the history pools; `sampleOf` > 1 keeps about one taxpayer
 * in that many (for estimating the spread between taxpayers in the context pass).
 */
export async function taxpayerCodeDigitCounts(
  db: Db,
  opts: { taxpayerIds: string[] } | { batchId: string; sampleOf: number },
): Promise<Map<string, Record<string, number[]>>> {
  const where =
    'taxpayerIds' in opts
      ? `r.taxpayer_id = ANY($1::uuid[])`
      : `r.taxpayer_id IN (SELECT DISTINCT taxpayer_id FROM tax_return WHERE batch_id = $1 AND abs(hashtext(taxpayer_id::text)) % $2 = 0)`;
  const params = 'taxpayerIds' in opts ? [opts.taxpayerIds] : [opts.batchId, Math.max(1, Math.floor(opts.sampleOf))];
  const rows: { taxpayer_id: string; line_code: string; d: number; n: string }[] = await db.query(
    `WITH s AS (SELECT DISTINCT r.taxpayer_id, r.id, li.line_code, abs(li.amount) AS a
                  FROM tax_return r JOIN line_item li ON li.return_id = r.id
                 WHERE ${where} AND NOT r.superseded AND ${ITEMISED_SQL})
     SELECT taxpayer_id, line_code, substr(ltrim(replace(a::text, '.', ''), '0'), 1, 1)::int AS d, count(*) AS n FROM s GROUP BY 1, 2, 3`,
    params,
  );
  return digitCountsBy(rows, (r) => r.taxpayer_id);
}

/** Pattern p-values of a run's scores (ids and p), for the Benjamini–Hochberg step. */
export async function runPatternPs(db: Db, batchId: string, version: number): Promise<{ id: string; p: number }[]> {
  const rows: { id: string; p: number }[] = await db.query(
    `SELECT id, (breakdown->'pattern'->>'p')::float8 AS p FROM return_score
      WHERE batch_id = $1 AND profile_version = $2 AND status = 'scored' AND breakdown ? 'pattern'`,
    [batchId, version],
  );
  return rows.map((r) => ({ id: String(r.id), p: Number(r.p) }));
}

/** Writes each score's q-value and replaces `pending` in the evidence of component `index` with its text. */
export async function writePatternQs(db: Db, index: number, pending: string, rows: { id: string; q: number; t: string }[]): Promise<void> {
  if (!rows.length) return;
  await db.query(
    `UPDATE return_score s
        SET breakdown = jsonb_set(
              jsonb_set(s.breakdown, '{pattern,q}', to_jsonb(u.q)),
              ARRAY['components', $1::text, 'evidence'],
              to_jsonb(replace(s.breakdown #>> ARRAY['components', $1::text, 'evidence'], $2, u.t)))
       FROM json_to_recordset($3::json) AS u(id bigint, q float8, t text)
      WHERE s.id = u.id`,
    [String(index), pending, JSON.stringify(rows)],
  );
}

/** A run of (batch, profile version) as stored: its size, progress, finish and any random review sample drawn. */
export interface RunRecord {
  id: string;
  total: number;
  scored: number;
  failed: number;
  finishedAt: Date | null;
  randomSample: unknown;
}

/** The run of (batch, profile version), if it was created. */
export async function findRun(db: Db, batchId: string, version: number): Promise<RunRecord | null> {
  const r: RunRecord[] = await db.query(
    `SELECT id::text AS id, total, scored, failed, finished_at AS "finishedAt", random_sample AS "randomSample"
       FROM scoring_run WHERE batch_id = $1 AND profile_version = $2`,
    [batchId, version],
  );
  return r[0] ?? null;
}

/** Creates the run of (batch, profile version) with its context, unless another caller already did. */
export async function insertRun(db: Db, batchId: string, version: number, total: number, context: unknown): Promise<void> {
  await db.query(
    `INSERT INTO scoring_run (batch_id, profile_version, total, context) VALUES ($1, $2, $3, $4::jsonb) ON CONFLICT (batch_id, profile_version) DO NOTHING`,
    [batchId, version, total, JSON.stringify(context)],
  );
}

/** A run's batch, version, stored context and the version's settings (JSON as stored), in one read. */
export async function runWithSettings<C>(db: Db, runId: string): Promise<{ batchId: string; version: number; context: C; settings: unknown } | null> {
  const r: { batch_id: string; profile_version: number; context: C; settings: unknown }[] = await db.query(
    `SELECT r.batch_id, r.profile_version, r.context, p.settings
       FROM scoring_run r LEFT JOIN scoring_profile p ON p.version = r.profile_version
      WHERE r.id = $1`,
    [runId],
  );
  return r.length ? { batchId: r[0].batch_id, version: r[0].profile_version, context: r[0].context, settings: r[0].settings } : null;
}

/** Marks a queued (or re-scored) batch as scoring, with how many returns are done. */
export async function markBatchScoring(db: Db, batchId: string, done: number): Promise<void> {
  await db.query(`UPDATE filing_batch SET state = 'scoring', scored_count = $2, updated_at = now() WHERE id = $1 AND state IN ('queued', 'scored')`, [
    batchId,
    done,
  ]);
}

/** One score to store (JSON keys kept short: a slice is sent as one document). */
export interface ScoreRow {
  r: string;
  s: 'scored' | 'failed';
  rs: number | null;
  st: number | null;
  p: number | null;
  b: unknown;
  f: string | null;
}

/** Stores a slice's scores; those already stored under the version are left as they are. @returns the new score ids by return id */
export async function insertScores(m: EntityManager, batchId: string, version: number, rows: ScoreRow[]): Promise<Map<string, string>> {
  // One JSON document for the slice: an array parameter of 500 JSON texts would be quoted and
  // escaped into a PostgreSQL array literal, which cost more than the insert itself.
  const inserted: { id: string; return_id: string }[] = await m.query(
    // tax_year (the partition key, docs/design.md#partitions-by-tax-year) from the return; a
    // LEFT JOIN, so a return that is gone fails the slice (NOT NULL) instead of being skipped.
    `INSERT INTO return_score (return_id, tax_year, batch_id, profile_version, status, risk_score, amount_at_stake, priority, breakdown, failure_reason)
     SELECT (e->>'r')::uuid, r.tax_year, $1, $2, e->>'s', (e->>'rs')::numeric, (e->>'st')::numeric / 100, (e->>'p')::numeric,
            nullif((e->'b')::jsonb, 'null'::jsonb), e->>'f'
       FROM json_array_elements($3::json) AS e LEFT JOIN tax_return r ON r.id = (e->>'r')::uuid
     ON CONFLICT (return_id, profile_version, tax_year) DO NOTHING
     RETURNING id, return_id`,
    [batchId, version, JSON.stringify(rows)],
  );
  return new Map(inserted.map((r) => [r.return_id, r.id]));
}

/** Adds a slice's counts to the run and the batch's progress. */
export async function addRunProgress(m: EntityManager, runId: string, batchId: string, scored: number, failed: number): Promise<void> {
  const run = returnedRows<{ scored: number; failed: number }>(
    await m.query(`UPDATE scoring_run SET scored = scored + $2, failed = failed + $3 WHERE id = $1 RETURNING scored, failed`, [runId, scored, failed]),
  );
  await m.query(`UPDATE filing_batch SET scored_count = $2, updated_at = now() WHERE id = $1`, [batchId, run[0].scored + run[0].failed]);
}

/** Marks the run finished if every return is scored or failed and it was not yet; @returns its batch and version then, else null. */
export async function finishRunIfComplete(m: EntityManager, runId: string): Promise<{ batchId: string; version: number } | null> {
  const r = returnedRows<{ batch_id: string; profile_version: number }>(
    await m.query(
      `UPDATE scoring_run SET finished_at = now() WHERE id = $1 AND finished_at IS NULL AND scored + failed >= total RETURNING batch_id, profile_version`,
      [runId],
    ),
  );
  return r.length ? { batchId: r[0].batch_id, version: Number(r[0].profile_version) } : null;
}

/** Marks a scoring batch as scored. */
export async function markBatchScored(m: EntityManager, batchId: string): Promise<void> {
  await m.query(`UPDATE filing_batch SET state = 'scored', updated_at = now() WHERE id = $1 AND state = 'scoring'`, [batchId]);
}

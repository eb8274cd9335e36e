/**
 * SQL of the digit-analysis pools (docs/methods.md#pooled-figures): the amounts of the line
 * items of current returns chosen by preparer, line code or taxpayer, read in key order in
 * chunks so a large pool never sits in memory twice, and what the pool pickers offer.
 */
import type { AnalysisPool } from '../../shared/analyses';
import type { Db } from '../db/db';
import { ITEMISED_SQL } from '../scoring/scoring.repository';

/** Line items read per query of a pool. */
const CHUNK = 50_000;

/** The WHERE clause of a pool over `line_item li JOIN tax_return r`, with its parameters ($1…). */
function poolWhere(pool: AnalysisPool): { where: string; params: unknown[] } {
  switch (pool.kind) {
    case 'preparer':
      return pool.taxYear === undefined
        ? { where: `r.preparer_id = $1 AND NOT r.superseded AND ${ITEMISED_SQL}`, params: [pool.preparerId] }
        : { where: `r.preparer_id = $1 AND r.tax_year = $2 AND NOT r.superseded AND ${ITEMISED_SQL}`, params: [pool.preparerId, pool.taxYear] };
    case 'lineCode':
      return pool.batchId !== undefined
        ? { where: `li.line_code = $1 AND r.batch_id = $2 AND NOT r.superseded`, params: [pool.lineCode, pool.batchId] }
        : { where: `li.line_code = $1 AND r.tax_year = $2 AND NOT r.superseded`, params: [pool.lineCode, pool.taxYear] };
    case 'taxpayer':
      return { where: `r.taxpayer_id = $1 AND NOT r.superseded AND ${ITEMISED_SQL}`, params: [pool.taxpayerId] };
  }
}

/** How many amounts the pool holds, and the tax years they come from. */
export async function countPoolAmounts(db: Db, pool: AnalysisPool): Promise<{ count: number; taxYears: number[] }> {
  const { where, params } = poolWhere(pool);
  const rows: { tax_year: number; n: string }[] = await db.query(
    `SELECT r.tax_year, count(*) AS n FROM line_item li JOIN tax_return r ON r.id = li.return_id WHERE ${where} GROUP BY r.tax_year ORDER BY r.tax_year`,
    params,
  );
  return { count: rows.reduce((s, r) => s + Number(r.n), 0), taxYears: rows.map((r) => Number(r.tax_year)) };
}

/**
 * Reads the pool's amounts as signed integer cents (numeric(14,2) × 100 is exact), in line-item
 * key order, CHUNK rows a query, handing each chunk to `take`. Stops after `limit` amounts.
 * @returns how many amounts were read
 */
export async function readPoolAmounts(db: Db, pool: AnalysisPool, limit: number, take: (cents: number[]) => void): Promise<number> {
  const { where, params } = poolWhere(pool);
  const k = params.length;
  let after: [string, number] | null = null;
  let read = 0;
  while (read < limit) {
    const keyset = after ? ` AND (li.return_id, li.line_no) > ($${k + 1}::uuid, $${k + 2}::smallint)` : '';
    const rows: { return_id: string; line_no: number; c: string }[] = await db.query(
      `SELECT li.return_id, li.line_no, (li.amount * 100)::bigint AS c FROM line_item li JOIN tax_return r ON r.id = li.return_id
        WHERE ${where}${keyset} ORDER BY li.return_id, li.line_no LIMIT ${Math.min(CHUNK, limit - read)}`,
      after ? [...params, ...after] : params,
    );
    if (rows.length === 0) break;
    take(rows.map((r) => Number(r.c)));
    read += rows.length;
    const last = rows[rows.length - 1];
    after = [last.return_id, Number(last.line_no)];
    if (rows.length < CHUNK) break;
  }
  return read;
}

/** A preparer by id, or null. */
export async function findPreparer(db: Db, id: string): Promise<{ id: string; code: string } | null> {
  const rows = await db.query(`SELECT id, code FROM preparer WHERE id = $1`, [id]);
  return rows.length ? { id: rows[0].id, code: rows[0].code } : null;
}

/** A batch by id, with what its label is made from, or null. */
export async function findPoolBatch(
  db: Db,
  id: string,
): Promise<{ id: string; batchNo: number; label: string | null; createdAt: Date; format: 'xlsx' | 'csv' } | null> {
  const rows = await db.query(`SELECT id, batch_no, label, created_at, format FROM filing_batch WHERE id = $1`, [id]);
  return rows.length ? { id: rows[0].id, batchNo: rows[0].batch_no, label: rows[0].label, createdAt: rows[0].created_at, format: rows[0].format } : null;
}

/** A taxpayer's name by id, or null. */
export async function findTaxpayerName(db: Db, id: string): Promise<string | null> {
  const rows = await db.query(`SELECT name FROM taxpayer WHERE id = $1`, [id]);
  return rows.length ? (rows[0].name as string) : null;
}

/** Preparers with how many current returns each has filed, by code. */
export async function findPoolPreparers(db: Db): Promise<{ id: string; code: string; returns: number }[]> {
  const rows: { id: string; code: string; n: string }[] = await db.query(
    `SELECT p.id, p.code, count(r.id) AS n FROM preparer p JOIN tax_return r ON r.preparer_id = p.id AND NOT r.superseded GROUP BY p.id, p.code ORDER BY p.code`,
  );
  return rows.map((r) => ({ id: r.id, code: r.code, returns: Number(r.n) }));
}

/** Batches that hold returns, newest first, with the tax years of their returns. */
export async function findPoolBatches(
  db: Db,
): Promise<{ id: string; batchNo: number; label: string | null; createdAt: Date; format: 'xlsx' | 'csv'; taxYears: number[] }[]> {
  const rows = await db.query(
    `SELECT b.id, b.batch_no, b.label, b.created_at, b.format, array_agg(DISTINCT r.tax_year ORDER BY r.tax_year) AS years
       FROM filing_batch b JOIN tax_return r ON r.batch_id = b.id GROUP BY b.id ORDER BY b.batch_no DESC`,
  );
  return rows.map((r: Record<string, unknown>) => ({
    id: r.id as string,
    batchNo: r.batch_no as number,
    label: r.label as string | null,
    createdAt: r.created_at as Date,
    format: r.format as 'xlsx' | 'csv',
    taxYears: (r.years as unknown[]).map(Number),
  }));
}

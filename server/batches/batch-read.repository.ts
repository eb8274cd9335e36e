/**
 * Reading filing batches for the Batches screens: a page of batch records and one batch
 * with its validation report.
 */
import type { DataSource } from 'typeorm';
import type { BatchIssue, BatchState } from '../../shared/returns/batch-rows';

/** A batch row joined with who loaded it. */
export interface BatchRecord {
  id: string;
  state: BatchState;
  format: 'xlsx' | 'csv';
  fileNames: string[];
  returnCount: number;
  lineItemCount: number;
  statementCount: number;
  amendedCount: number;
  scoredCount: number;
  errorCount: number;
  loadedById: string | null;
  loadedByName: string | null;
  createdAt: Date;
  updatedAt: Date;
  batchNo: number;
  label: string | null;
  rowsChecked: number;
  progressAt: Date | null;
}

/** The record with its report. */
export interface BatchRecordWithReport extends BatchRecord {
  errors: BatchIssue[];
  notices: BatchIssue[];
}

const SUMMARY_COLUMNS = `
  b.id, b.state, b.format, b.file_names AS "fileNames", b.return_count AS "returnCount",
  b.line_item_count AS "lineItemCount", b.statement_count AS "statementCount",
  b.amended_count AS "amendedCount", b.scored_count AS "scoredCount", b.error_count AS "errorCount",
  b.loaded_by AS "loadedById", u.display_name AS "loadedByName", b.created_at AS "createdAt", b.updated_at AS "updatedAt",
  b.batch_no AS "batchNo", b.label, b.rows_checked AS "rowsChecked", b.progress_at AS "progressAt"`;

/** A page of batches, newest first. */
export async function findBatches(ds: DataSource, page: number, pageSize: number): Promise<{ rows: BatchRecord[]; total: number }> {
  const [rows, count] = await Promise.all([
    ds.query(
      `SELECT ${SUMMARY_COLUMNS} FROM filing_batch b LEFT JOIN app_user u ON u.id = b.loaded_by
       ORDER BY b.created_at DESC, b.id DESC LIMIT $1 OFFSET $2`,
      [pageSize, (page - 1) * pageSize],
    ),
    ds.query(`SELECT count(*)::int AS n FROM filing_batch`),
  ]);
  return { rows, total: count[0].n };
}

/** One batch with its report, or null. */
export async function findBatch(ds: DataSource, id: string): Promise<BatchRecordWithReport | null> {
  const rows = await ds.query(`SELECT ${SUMMARY_COLUMNS}, b.errors, b.notices FROM filing_batch b LEFT JOIN app_user u ON u.id = b.loaded_by WHERE b.id = $1`, [
    id,
  ]);
  return rows[0] ?? null;
}

/** Scoring's result for a batch, as stored: see {@link findBatchOutcome}. */
export interface BatchOutcomeRecord {
  profileVersion: number;
  casesOpened: number;
  failed: number;
  /** Returns and opened cases per score band (band 0 = scores 0–10 … band 9 = 90–100). */
  bands: { band: number; returns: number; cases: number }[];
  median: number | null;
}

/**
 * Cases opened from the batch (under any profile version) and, for the batch's latest scoring
 * run, how its scores spread over bands of `bandWidth` points; null when no score is stored.
 */
export async function findBatchOutcome(ds: DataSource, id: string, bandWidth: number): Promise<BatchOutcomeRecord | null> {
  const run: { v: number }[] = await ds.query(`SELECT profile_version AS v FROM scoring_run WHERE batch_id = $1 ORDER BY started_at DESC, id DESC LIMIT 1`, [
    id,
  ]);
  const version = run[0]?.v ?? (await ds.query(`SELECT max(profile_version) AS v FROM return_score WHERE batch_id = $1`, [id]))[0]?.v ?? null;
  if (version === null) return null;
  const lastBand = Math.ceil(100 / bandWidth) - 1;
  const [bands, totals] = await Promise.all([
    ds.query(
      `SELECT LEAST(floor(s.risk_score / $3)::int, $4) AS band, count(*)::int AS returns, count(c.id)::int AS cases
         FROM return_score s LEFT JOIN exam_case c ON c.return_id = s.return_id
        WHERE s.batch_id = $1 AND s.profile_version = $2 AND s.status = 'scored'
        GROUP BY 1 ORDER BY 1`,
      [id, version, bandWidth, lastBand],
    ),
    ds.query(
      `SELECT (SELECT count(*)::int FROM exam_case WHERE batch_id = $1) AS "casesOpened",
              (SELECT count(*)::int FROM return_score WHERE batch_id = $1 AND profile_version = $2 AND status = 'failed') AS failed,
              (SELECT percentile_cont(0.5) WITHIN GROUP (ORDER BY risk_score)::float8 FROM return_score
                WHERE batch_id = $1 AND profile_version = $2 AND status = 'scored') AS median`,
      [id, version],
    ),
  ]);
  const t = totals[0];
  return { profileVersion: Number(version), casesOpened: t.casesOpened, failed: t.failed, bands, median: t.median };
}

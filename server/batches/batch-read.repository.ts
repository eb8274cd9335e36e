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
  b.loaded_by AS "loadedById", u.display_name AS "loadedByName", b.created_at AS "createdAt", b.updated_at AS "updatedAt"`;

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

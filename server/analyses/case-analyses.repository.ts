/** SQL of the working papers kept with a case (table case_analysis) and the reply files they read. */
import type { Db } from '../db/db';

/** A saved analysis row with its author's name. */
export interface CaseAnalysisRow {
  id: string;
  caseId: string;
  createdAt: Date;
  createdBy: string;
  createdByName: string;
  source: unknown;
  sourceLabel: string;
  fileName: string | null;
  sha256: string | null;
  amountColumn: string | null;
  splitColumn: string | null;
  what: string;
  result: unknown;
}

const SELECT = `SELECT a.id, a.case_id, a.created_at, a.created_by, COALESCE(u.display_name, u.username, '') AS created_by_name, a.source,
  a.source_label, a.file_name, a.sha256, a.amount_column, a.split_column, a.what, a.result
  FROM case_analysis a LEFT JOIN app_user u ON u.id = a.created_by`;

function toRow(r: Record<string, unknown>): CaseAnalysisRow {
  return {
    id: r.id as string,
    caseId: r.case_id as string,
    createdAt: r.created_at as Date,
    createdBy: r.created_by as string,
    createdByName: r.created_by_name as string,
    source: r.source,
    sourceLabel: r.source_label as string,
    fileName: (r.file_name as string | null) ?? null,
    sha256: (r.sha256 as string | null) ?? null,
    amountColumn: (r.amount_column as string | null) ?? null,
    splitColumn: (r.split_column as string | null) ?? null,
    what: r.what as string,
    result: r.result,
  };
}

/** Stores a working paper; returns it as read back. */
export async function insertCaseAnalysis(
  db: Db,
  a: Omit<CaseAnalysisRow, 'id' | 'createdAt' | 'createdByName'> & { createdAt: Date },
): Promise<CaseAnalysisRow> {
  const rows = await db.query(
    `INSERT INTO case_analysis (case_id, created_by, created_at, source, source_label, file_name, sha256, amount_column, split_column, what, result)
     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11) RETURNING id`,
    [
      a.caseId,
      a.createdBy,
      a.createdAt,
      JSON.stringify(a.source),
      a.sourceLabel,
      a.fileName,
      a.sha256,
      a.amountColumn,
      a.splitColumn,
      a.what,
      JSON.stringify(a.result),
    ],
  );
  return (await findCaseAnalysis(db, a.caseId, rows[0].id as string))!;
}

/** The working papers of a case, oldest first. */
export async function findCaseAnalyses(db: Db, caseId: string): Promise<CaseAnalysisRow[]> {
  const rows = await db.query(`${SELECT} WHERE a.case_id = $1 ORDER BY a.created_at, a.id`, [caseId]);
  return rows.map(toRow);
}

/** One working paper of a case, or null. */
export async function findCaseAnalysis(db: Db, caseId: string, id: string): Promise<CaseAnalysisRow | null> {
  const rows = await db.query(`${SELECT} WHERE a.case_id = $1 AND a.id = $2`, [caseId, id]);
  return rows.length ? toRow(rows[0]) : null;
}

/** A reply file of the case (through its document request), with its bytes. */
export async function findCaseReplyFile(
  db: Db,
  caseId: string,
  uploadId: string,
): Promise<{ fileName: string; contentType: string; sha256: string; content: Buffer } | null> {
  const rows = await db.query(
    `SELECT u.file_name, u.content_type, u.sha256, u.content FROM reply_upload u JOIN document_request d ON d.id = u.document_request_id
      WHERE u.id = $1 AND d.case_id = $2`,
    [uploadId, caseId],
  );
  return rows.length ? { fileName: rows[0].file_name, contentType: rows[0].content_type, sha256: rows[0].sha256, content: rows[0].content } : null;
}

/** The case's return: amount per line code (repeatable lines summed), as exact decimal text. */
export async function findReturnLineTotals(db: Db, caseId: string): Promise<Map<string, string>> {
  const rows = await db.query(
    `SELECT l.line_code, sum(l.amount)::text AS total FROM exam_case c JOIN line_item l ON l.return_id = c.return_id WHERE c.id = $1 GROUP BY l.line_code`,
    [caseId],
  );
  return new Map(rows.map((r: { line_code: string; total: string }) => [r.line_code, r.total]));
}

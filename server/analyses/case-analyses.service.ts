/**
 * Digit analyses kept with a case as working papers (issue 15): run on a file the taxpayer
 * sent through a reply link, stored with the result JSON of `npm run digits -- --json`, never
 * changed afterwards, and exported as a PDF or XLSX working paper; or run on a pool of the
 * returns on file (server/analyses/pool.service.ts). Every save and read is in the access
 * log, like any taxpayer data.
 */
import fs from 'node:fs';
import type { DataSource, EntityManager } from 'typeorm';
import { digitResult, digitResultSchema, type DigitResultJson } from '../../shared/digits';
import {
  dataFileEnding,
  type AnalysisPool,
  type Reconciliation,
  type ReconciliationRequest,
  type SaveAnalysisRequest,
  type SavedAnalysis,
} from '../../shared/analyses';
import { LINE_CODE_DEFS, LINE_CODES, type LineCode } from '../../shared/returns/line-codes';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { removeSpooled, spoolPath } from '../batches/intake/upload-spool';
import { assertMayAct, lockCase, logCaseAccess } from '../cases/case-workflow';
import { now } from '../clock';
import { isUuid } from '../../shared/ids';
import { HttpError } from '../http/errors';
import { readColumn } from './analyses.service';
import { readPool } from './pool.service';
import {
  findCaseAnalyses,
  findCaseAnalysis,
  findCaseReplyFile,
  findReturnLineTotals,
  insertCaseAnalysis,
  type CaseAnalysisRow,
} from './case-analyses.repository';
import { renderWorkingPaperPdf, type WorkingPaper } from './working-paper-pdf';
import { renderWorkingPaperXlsx } from './working-paper-xlsx';

function toDto(r: CaseAnalysisRow): SavedAnalysis {
  return {
    id: r.id,
    createdAt: r.createdAt.toISOString(),
    createdBy: { id: r.createdBy, name: r.createdByName },
    source: r.source as SavedAnalysis['source'],
    sourceLabel: r.sourceLabel,
    fileName: r.fileName,
    sha256: r.sha256,
    column: r.amountColumn,
    by: r.splitColumn,
    what: r.what,
    result: r.result as DigitResultJson,
  };
}

/**
 * Locks the case, checks that the actor may act on it, and reads a column of one of its reply
 * files (CSV or XLSX) in the reading thread, split by `by` when given.
 * @param purpose what reads it, for the refusal of a document ("digit analysis")
 */
async function readReplyColumn(
  m: EntityManager,
  audit: StaffAudit,
  caseId: string,
  req: { source: { uploadId: string }; column?: string | null },
  by: string | null,
  purpose: string,
) {
  const c = await lockCase(m, caseId);
  assertMayAct(audit.actor, c);
  const file = isUuid(req.source.uploadId) ? await findCaseReplyFile(m, caseId, req.source.uploadId) : null;
  if (!file) throw new HttpError(404, 'No such reply file on this case.');
  const ext = dataFileEnding(file.contentType);
  if (!ext) throw new HttpError(422, `"${file.fileName}" is a document, not a table of figures; ${purpose} reads CSV or XLSX files.`);
  const stored = spoolPath(ext);
  fs.writeFileSync(stored, file.content, { mode: 0o600 });
  try {
    return { c, file, read: await readColumn(stored, file.fileName, req.column ?? null, by) };
  } finally {
    await removeSpooled([{ path: stored }]);
  }
}

/**
 * Runs the digit analysis of a reply file's column and keeps it with the case.
 * @throws HttpError 404 (no such case or file on this case), 403 (not the case's examiner),
 *   422 (a file that holds no data, a missing column, a value that is not an amount)
 */
export async function saveCaseAnalysis(ds: DataSource, audit: StaffAudit, caseId: string, req: SaveAnalysisRequest): Promise<SavedAnalysis> {
  const { uploadId, pool } = req.source;
  if (pool) return savePoolAnalysis(ds, audit, caseId, pool);
  return ds.transaction(async (m) => {
    const { c, file, read } = await readReplyColumn(
      m,
      audit,
      caseId,
      { source: { uploadId: uploadId! }, column: req.column },
      req.by ?? null,
      'digit analysis',
    );
    const result = digitResultSchema.parse(JSON.parse(JSON.stringify(digitResult(read, read.groups))));
    const row = await insertCaseAnalysis(m, {
      caseId,
      createdBy: audit.actor.id,
      createdAt: now(),
      source: req.source,
      sourceLabel: `Reply file ${file.fileName}`,
      fileName: file.fileName,
      sha256: file.sha256,
      amountColumn: req.column ?? null,
      splitColumn: req.by ?? null,
      what: read.what,
      result,
    });
    await logCaseAccess(m, audit, c, 'change', `digit analysis ${row.id} saved (${read.what} of ${file.fileName})`);
    return toDto(row);
  });
}

/**
 * Runs the digit analysis of a pool of the returns on file and keeps it with the case: the
 * pool and its description (with the count of amounts) stand where a file's name and hash
 * would. Two access-log lines: the pool's amounts read, and the case changed.
 * @throws HttpError 404 (no such case, or what the pool names), 403 (not the case's examiner),
 *   413 (a pool too large), 422 (a pool without amounts)
 */
async function savePoolAnalysis(ds: DataSource, audit: StaffAudit, caseId: string, pool: AnalysisPool): Promise<SavedAnalysis> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(audit.actor, c);
    const p = await readPool(m, pool);
    const result = digitResultSchema.parse(JSON.parse(JSON.stringify(digitResult(p.column))));
    const row = await insertCaseAnalysis(m, {
      caseId,
      createdBy: audit.actor.id,
      createdAt: now(),
      source: { pool },
      sourceLabel: p.description,
      fileName: null,
      sha256: null,
      amountColumn: null,
      splitColumn: null,
      what: p.what,
      result,
    });
    await recordAccess(m, audit, p.event);
    await logCaseAccess(m, audit, c, 'change', `digit analysis ${row.id} saved (${p.description})`);
    return toDto(row);
  });
}

/** The working papers of a case, logged as a read of the case's data. */
export async function listCaseAnalyses(ds: DataSource, audit: StaffAudit, caseId: string): Promise<SavedAnalysis[]> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    const rows = await findCaseAnalyses(m, caseId);
    await logCaseAccess(m, audit, c, 'view', `digit analyses listed (${rows.length})`);
    return rows.map(toDto);
  });
}

/**
 * One working paper as a PDF or an XLSX workbook, logged as an export of the case's data.
 * @throws HttpError 404 (no such case, or no such analysis on it)
 */
export async function caseAnalysisPaper(
  ds: DataSource,
  audit: StaffAudit,
  caseId: string,
  analysisId: string,
  format: 'pdf' | 'xlsx',
): Promise<{ fileName: string; bytes: Buffer }> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    const row = isUuid(analysisId) ? await findCaseAnalysis(m, caseId, analysisId) : null;
    if (!row) throw new HttpError(404, 'No such analysis on this case.');
    await logCaseAccess(m, audit, c, 'export', `digit analysis ${row.id} working paper${format === 'xlsx' ? ' (XLSX)' : ''}`);
    const result = row.result as DigitResultJson;
    const wp: WorkingPaper = {
      caseRef: `Case ${c.id}`,
      sourceLabel: row.sourceLabel,
      fileName: row.fileName,
      sha256: row.sha256,
      what: row.what,
      ranBy: row.createdByName,
      ranAt: row.createdAt,
      profile: result as never,
      split: result.split,
    };
    const bytes = format === 'pdf' ? await renderWorkingPaperPdf(wp) : await renderWorkingPaperXlsx(wp, result);
    return { fileName: `working-paper-${row.createdAt.toISOString().slice(0, 10)}-${row.id.slice(0, 8)}.${format}`, bytes };
  });
}

/** Signed cents (bigint) as decimal text with 2 decimals. */
function centsText(c: bigint): string {
  const neg = c < 0n;
  const a = (neg ? -c : c).toString().padStart(3, '0');
  return `${neg ? '-' : ''}${a.slice(0, -2)}.${a.slice(-2)}`;
}

/** Decimal text (numeric) as signed cents. */
function textCents(t: string): bigint {
  const m = /^(-?)(\d+)(?:\.(\d{1,2}))?$/.exec(t);
  if (!m) throw new Error(`not a numeric amount: ${t}`);
  const c = BigInt(m[2]) * 100n + BigInt((m[3] ?? '').padEnd(2, '0'));
  return m[1] === '-' ? -c : c;
}

/**
 * Reconciles a received ledger with the case's return: the ledger's total per category (the
 * `by` column), categories mapped to line codes by the examiner, beside the amount the return
 * reports on that line, with the difference (ledger − reported). Logged as a read of the case.
 */
export async function reconcileLedger(ds: DataSource, audit: StaffAudit, caseId: string, req: ReconciliationRequest): Promise<Reconciliation> {
  return ds.transaction(async (m) => {
    const { c, file, read } = await readReplyColumn(m, audit, caseId, req, req.by, 'a reconciliation');
    const groups = read.groups!;
    const totals = groups.names.map(() => 0n);
    read.cents.forEach((v, i) => (totals[groups.ofCents[i]] += BigInt(v)));
    read.wide.forEach((w, i) => (totals[groups.ofWide[i]] += w.negative ? -BigInt(w.digits) : BigInt(w.digits)));
    const unknown = Object.keys(req.mapping).filter((k) => !groups.names.includes(k));
    if (unknown.length) {
      throw new HttpError(
        422,
        `The ledger's "${groups.column}" column has no category ${unknown.map((k) => `"${k}"`).join(', ')}; map only categories it holds.`,
      );
    }
    const reported = await findReturnLineTotals(m, caseId);
    const byCode = new Map<LineCode, { categories: string[]; total: bigint }>();
    const unmapped: Reconciliation['unmapped'] = [];
    groups.names.forEach((name, g) => {
      const code = req.mapping[name];
      if (!code) return void unmapped.push({ category: name, total: centsText(totals[g]) });
      const row = byCode.get(code) ?? { categories: [], total: 0n };
      row.categories.push(name);
      row.total += totals[g];
      byCode.set(code, row);
    });
    const rows = [...byCode.entries()]
      .sort((a, b) => LINE_CODES.indexOf(a[0]) - LINE_CODES.indexOf(b[0]))
      .map(([code, r]) => {
        const rep = textCents(reported.get(code) ?? '0');
        return {
          lineCode: code,
          label: LINE_CODE_DEFS[code].label,
          categories: r.categories,
          ledgerTotal: centsText(r.total),
          reported: centsText(rep),
          difference: centsText(r.total - rep),
        };
      });
    await logCaseAccess(m, audit, c, 'view', `ledger ${file.fileName} reconciled with the return (${rows.length} line codes)`);
    return { rows, unmapped };
  });
}

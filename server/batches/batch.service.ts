/**
 * Filing batches: take an upload in, validate it row by row, store it whole or not at all,
 * hand it to the scoring queue; list batches and show their reports. No req/res here: the
 * routes turn HTTP into these calls.
 */
import type { Writable } from 'node:stream';
import ExcelJS from 'exceljs';
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import {
  BATCH_TABLES,
  officeTaxYears,
  type BatchCreated,
  type BatchDetail,
  type BatchIssue,
  type BatchList,
  type BatchRejected,
  type BatchSummary,
  type BatchTable,
  type IntakeLimits,
  maskIssueForListing,
  defaultBatchLabel,
  INTAKE_STALLED_AFTER_SECONDS,
  SCORE_BAND_WIDTH,
  type BatchOutcome,
} from '../../shared/returns/batch-rows';
import { safeCellText } from '../../shared/spreadsheet-text';
import { officeDate, now as officeNow } from '../clock';
import { HttpError } from '../http/errors';
import { QUEUES } from '../queue/queues';
import {
  deleteBatchRecord,
  endStalledBatch,
  findBatchByHash,
  insertBatchRecord,
  markRejected,
  recoverInterruptedBatches,
  reportProgress,
  takeOverStaleBatch,
} from './batch-intake.repository';
import { findBatch, findBatchOutcome, findBatches, type BatchRecord } from './batch-read.repository';
import { IntakeEndedError, IssueList, runIntake } from './intake/ingest';
import { checkUploadFiles, csvTables, uploadFileNames, uploadHash, xlsxTables, type BatchUpload, type TableSource, type UploadedFile } from './intake/sources';

/** What the intake needs. */
export interface IntakeDeps {
  dataSource: DataSource;
  /** null where no queue runs (the scoring job is then left to whoever starts one). */
  boss: PgBoss | null;
  limits: IntakeLimits;
  /** The receiving date decides the office's tax-year range. */
  now?: () => Date;
  /** Told how long each phase took (benchmarks). */
  trace?: (phase: string, ms: number) => void;
}

/** How an upload ended. */
export type IngestOutcome =
  { kind: 'accepted'; batch: BatchCreated } | { kind: 'rejected'; body: BatchRejected } | { kind: 'duplicate'; body: { error: string; batchId: string } };

/** The intake writes its progress at most this often (one UPDATE beside a stream of rows). */
const PROGRESS_EVERY_MS = 1000;

/**
 * Makes a {@link BatchUpload} from the multipart parts: either `file` (one XLSX workbook) or
 * `returns` + `line_items` (+ `statements`) as CSV files.
 * @returns the upload, or the problems that make it no batch at all
 */
export function uploadFromParts(parts: Partial<Record<'file' | BatchTable, UploadedFile>>): { upload: BatchUpload } | { issues: BatchIssue[] } {
  const issue = (message: string): { issues: BatchIssue[] } => ({ issues: [{ file: '', row: null, column: null, message }] });
  const csv = BATCH_TABLES.filter((t) => parts[t]);
  if (parts.file && csv.length)
    return issue('Send either one XLSX workbook (part "file") or CSV files (parts "returns", "line_items", "statements"), not both.');
  if (parts.file) return { upload: { format: 'xlsx', workbook: parts.file } };
  if (!csv.length) return issue('No file was sent. Choose one XLSX workbook, or the CSV files returns and line_items (and optionally statements).');
  const missing = (['returns', 'line_items'] as const).filter((t) => !parts[t]);
  if (missing.length) {
    return issue(
      `The CSV file${missing.length > 1 ? 's' : ''} ${missing.map((m) => `"${m}"`).join(' and ')} ${missing.length > 1 ? 'are' : 'is'} missing. A CSV batch needs returns and line_items (statements is optional).`,
    );
  }
  return { upload: { format: 'csv', parts: Object.fromEntries(csv.map((t) => [t, parts[t]])) } };
}

function rejectedBody(batchId: string | null, errors: IssueList): BatchRejected {
  return {
    error: `The batch was rejected: ${errors.count.toLocaleString('en-GB')} problem${errors.count === 1 ? '' : 's'} found. Nothing of it was stored. Fix the file${batchId ? ' (see the report)' : ''} and upload it again.`,
    batchId,
    errorCount: errors.count,
    // Listed as the batch's report is (TIN-like values masked), so both answers agree.
    errors: errors.report().map(maskIssueForListing),
  };
}

/**
 * Takes one upload through intake: file checks, duplicate check by SHA-256, row-by-row
 * validation, and storage in one transaction; then the scoring job is queued.
 *
 * @param user who uploads (recorded as `loaded_by`)
 */
export async function ingestUpload(deps: IntakeDeps, upload: BatchUpload, user: { id: string } | null, label: string | null = null): Promise<IngestOutcome> {
  const clock = deps.now ?? officeNow;
  const fileIssues = await checkUploadFiles(upload, deps.limits);
  if (fileIssues.length) {
    const list = new IssueList();
    fileIssues.forEach((i) => list.add(i));
    return { kind: 'rejected', body: rejectedBody(null, list) };
  }

  const th = performance.now();
  const fileHash = await uploadHash(upload);
  deps.trace?.('file checks and SHA-256', performance.now() - th);
  let batchId = await insertBatchRecord(deps.dataSource, {
    fileHash,
    format: upload.format,
    fileNames: uploadFileNames(upload),
    loadedBy: user?.id ?? null,
    label,
    at: clock(),
  });
  if (!batchId) {
    const earlier = await findBatchByHash(deps.dataSource, fileHash);
    const take = { loadedBy: user?.id ?? null, label, at: clock(), stalledAfterSeconds: INTAKE_STALLED_AFTER_SECONDS };
    if (earlier && (await takeOverStaleBatch(deps.dataSource, earlier.id, take))) {
      batchId = earlier.id;
    } else if (earlier) {
      return { kind: 'duplicate', body: { error: duplicateMessage(earlier.state, earlier.createdAt), batchId: earlier.id } };
    } else {
      throw new Error('filing_batch hash conflict without a row: retry');
    }
  }

  const sheetsSeen: string[] = [];
  const sources: AsyncIterable<TableSource> = upload.format === 'xlsx' ? xlsxTables(upload.workbook, (name) => sheetsSeen.push(name)) : csvTables(upload.parts);
  const describeMissing = (table: BatchTable): BatchIssue =>
    upload.format === 'xlsx'
      ? {
          file: upload.workbook.originalName,
          row: null,
          column: null,
          message: `The workbook has no sheet named "${table}"${sheetsSeen.length ? ` (its sheets: ${sheetsSeen.join(', ')})` : ' (no worksheets were found in it)'}. A batch workbook needs the sheets returns and line_items, and may have statements.`,
        }
      : { file: '', row: null, column: null, message: `The ${table} CSV file is missing.` };

  const progress = progressWriter(deps.dataSource, batchId, clock);
  let result;
  try {
    result = await runIntake(
      { dataSource: deps.dataSource, batchId, limits: deps.limits, years: officeTaxYears(clock()), trace: deps.trace, onRows: progress.report },
      sources,
      describeMissing,
    );
  } catch (e) {
    await progress.settle();
    if (e instanceof IntakeEndedError)
      throw new HttpError(409, 'This batch was ended as stalled while it was still being checked, so nothing of it was stored. Upload the file again.');
    // A server-side failure is not the file's fault: forget the attempt so it can be sent again.
    await deleteBatchRecord(deps.dataSource, batchId).catch(() => undefined);
    throw e;
  }
  await progress.settle();

  if (!result.accepted) {
    await markRejected(deps.dataSource, batchId, result.errors.report(), result.errors.count);
    return { kind: 'rejected', body: rejectedBody(batchId, result.errors) };
  }

  await queueScoring(deps.boss, batchId);
  return { kind: 'accepted', batch: { id: batchId, state: 'queued', counts: result.counts, amendedReturns: result.amended } };
}

/**
 * Writes the rows read so far at most once a {@link PROGRESS_EVERY_MS}, never two writes at
 * once, and never failing the intake (progress is a courtesy to the screen).
 */
function progressWriter(ds: DataSource, batchId: string, clock: () => Date) {
  let last = 0;
  let pending: Promise<void> | null = null;
  return {
    report: (rows: number) => {
      const t = Date.now();
      if (pending || t - last < PROGRESS_EVERY_MS) return;
      last = t;
      pending = reportProgress(ds, batchId, rows, clock())
        .catch((e) => console.warn(`[intake] could not record progress of batch ${batchId}:`, e))
        .finally(() => (pending = null));
    },
    settle: async () => {
      await pending;
    },
  };
}

function duplicateMessage(state: string, createdAt: Date): string {
  const when = new Date(createdAt).toISOString().slice(0, 16).replace('T', ' ');
  if (state === 'rejected')
    return `This file was uploaded before (${when} UTC) and rejected. Open that batch to see what to fix, then upload the corrected file.`;
  if (state === 'validating' || state === 'received') return `This file is being checked right now (uploaded ${when} UTC). Wait for that batch to finish.`;
  return `This file was already uploaded (${when} UTC) and accepted; it is not stored twice.`;
}

/**
 * At server start-up: a batch a crash left `validating` (or `received`) is marked rejected
 * with the reason, its rows removed, and its file freed for a new upload at once.
 * @returns the batches recovered (for the start-up log)
 */
export async function recoverInterruptedIntake(ds: DataSource, now: Date = officeNow()): Promise<{ id: string; fileNames: string[] }[]> {
  const when = now.toISOString().slice(0, 16).replace('T', ' ');
  return recoverInterruptedBatches(ds, {
    file: '',
    row: null,
    column: null,
    message: `The server stopped while this batch was being checked, so it was not finished (recovered at start-up, ${when} UTC). Nothing of it was stored. Upload the same file again.`,
  });
}

/** Hands an accepted batch to the scoring worker. The batch stays `queued` until a worker takes it. */
async function queueScoring(boss: PgBoss | null, batchId: string): Promise<void> {
  if (!boss) {
    console.warn(`[intake] no queue client: batch ${batchId} is stored and queued but no scoring job was sent`);
    return;
  }
  try {
    const jobId = await boss.send(QUEUES.scoreBatch, { batchId });
    if (!jobId) console.error(`[intake] the queue ${QUEUES.scoreBatch} refused the job for batch ${batchId} (does the queue exist?)`);
  } catch (e) {
    // The batch is committed; failing the upload now would invite a duplicate. Log and go on.
    console.error(`[intake] could not queue scoring for batch ${batchId}:`, e);
  }
}

function summary(r: BatchRecord, at: Date = officeNow()): BatchSummary {
  const checking = r.state === 'received' || r.state === 'validating';
  const lastSign = new Date(r.progressAt ?? r.updatedAt).getTime();
  return {
    batchNo: r.batchNo,
    label: r.label ?? defaultBatchLabel(r.batchNo, officeDate(new Date(r.createdAt)), r.format),
    rowsChecked: r.rowsChecked,
    // While checking: so far, by the office clock; after: how long the check took (stable).
    elapsedSeconds: Math.max(0, Math.round(((checking ? at : new Date(r.updatedAt)).getTime() - new Date(r.createdAt).getTime()) / 1000)),
    stalled: checking && at.getTime() - lastSign > INTAKE_STALLED_AFTER_SECONDS * 1000,
    id: r.id,
    state: r.state,
    format: r.format,
    fileNames: r.fileNames,
    counts: { returns: r.returnCount, lineItems: r.lineItemCount, statements: r.statementCount },
    amendedReturns: r.amendedCount,
    progress: { scored: Math.min(r.scoredCount, r.returnCount), total: r.returnCount },
    errorCount: r.errorCount,
    loadedBy: r.loadedById ? { id: r.loadedById, displayName: r.loadedByName ?? '(removed user)' } : null,
    createdAt: new Date(r.createdAt).toISOString(),
  };
}

/** A page of batches, newest first. */
export async function listBatches(ds: DataSource, q: { page: number; pageSize: number }): Promise<BatchList> {
  const { rows, total } = await findBatches(ds, q.page, q.pageSize);
  return { items: rows.map((r) => summary(r)), total, page: q.page, pageSize: q.pageSize };
}

/** One batch with its report; null when there is none with that id. */
export async function getBatch(ds: DataSource, id: string): Promise<BatchDetail | null> {
  const r = await findBatch(ds, id);
  if (!r) return null;
  // Rejected values can be TINs: listed masked (the report workbook shows the same).
  const scored = r.state === 'scoring' || r.state === 'scored';
  const outcome = scored ? await batchOutcome(ds, id) : null;
  return { ...summary(r), errors: r.errors.map(maskIssueForListing), notices: r.notices.map(maskIssueForListing), outcome };
}

/** Cases opened and the score distribution in bands of {@link SCORE_BAND_WIDTH} (every band listed, empty ones at 0). */
async function batchOutcome(ds: DataSource, id: string): Promise<BatchOutcome | null> {
  const o = await findBatchOutcome(ds, id, SCORE_BAND_WIDTH);
  if (!o) return null;
  const bands = Array.from({ length: Math.ceil(100 / SCORE_BAND_WIDTH) }, (_, i) => {
    const b = o.bands.find((x) => x.band === i);
    return { from: i * SCORE_BAND_WIDTH, returns: b?.returns ?? 0, cases: b?.cases ?? 0 };
  });
  return {
    profileVersion: o.profileVersion,
    casesOpened: o.casesOpened,
    failed: o.failed,
    bands,
    median: o.median === null ? null : Math.round(o.median * 10) / 10,
  };
}

/**
 * Ends a batch whose check has stalled (no progress for {@link INTAKE_STALLED_AFTER_SECONDS}
 * by the office clock), so its file can be uploaded again at once: the uploaded files are not
 * kept after the request, so a retry is a new upload of the same file. Idempotent: a batch
 * already ended so is answered as it stands.
 * @returns the batch as it now stands, and whether this call ended it
 */
export async function endStalledIntake(ds: DataSource, id: string, at: Date = officeNow()): Promise<{ batch: BatchDetail; ended: boolean }> {
  const stalledBefore = new Date(at.getTime() - INTAKE_STALLED_AFTER_SECONDS * 1000);
  const when = at.toISOString().slice(0, 16).replace('T', ' ');
  const outcome = await endStalledBatch(ds, id, stalledBefore, {
    file: '',
    row: null,
    column: null,
    message: `This batch stopped being checked: no row was read for over ${INTAKE_STALLED_AFTER_SECONDS / 60} minutes, so it was ended (${when} UTC). Nothing of it was stored. Upload the same file again.`,
  });
  if (outcome === null) throw new HttpError(404, `There is no batch ${id}.`);
  const batch = (await getBatch(ds, id))!;
  if (outcome === 'moving') {
    const checking = batch.state === 'received' || batch.state === 'validating';
    throw new HttpError(
      409,
      checking
        ? 'This batch is still being checked (its rows are still being read), so it is not stalled. Wait for it to finish.'
        : `This batch is not being checked any more (${batch.state}); there is nothing to retry.`,
    );
  }
  return { batch, ended: outcome === 'ended' };
}

/**
 * Writes a batch's validation report as an XLSX workbook (sheets "errors", "notices" and
 * "batch") to `out`. Text from the upload is neutralised against formula injection.
 * @returns false when there is no such batch (nothing written)
 */
export async function writeBatchReport(ds: DataSource, id: string, out: Writable): Promise<boolean> {
  const batch = await getBatch(ds, id);
  if (!batch) return false;
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, useStyles: true, useSharedStrings: false });
  wb.creator = 'Plumbline';
  const columns = [
    { header: 'File', key: 'file', width: 28 },
    { header: 'Row', key: 'row', width: 8 },
    { header: 'Column', key: 'column', width: 16 },
    { header: 'Value', key: 'value', width: 24 },
    { header: 'Message', key: 'message', width: 100 },
  ];
  for (const [name, issues] of [
    ['errors', batch.errors],
    ['notices', batch.notices],
  ] as const) {
    const ws = wb.addWorksheet(name, { views: [{ state: 'frozen', ySplit: 1 }] });
    ws.columns = columns;
    ws.getRow(1).font = { bold: true };
    ws.autoFilter = { from: 'A1', to: 'E1' };
    ws.getRow(1).commit();
    for (const i of issues) {
      ws.addRow({
        file: safeCellText(i.file),
        row: i.row ?? null,
        column: safeCellText(i.column),
        value: safeCellText(i.value ?? null),
        message: safeCellText(i.message),
      }).commit();
    }
    ws.commit();
  }
  const info = wb.addWorksheet('batch');
  info.columns = [
    { header: 'Field', key: 'k', width: 22 },
    { header: 'Value', key: 'v', width: 60 },
  ];
  const facts: [string, string | number][] = [
    ['Batch', batch.label],
    ['Batch number', batch.batchNo],
    ['Batch id', batch.id],
    ['State', batch.state],
    ['Files', batch.fileNames.join(', ')],
    ['Uploaded', batch.createdAt],
    ['Uploaded by', batch.loadedBy?.displayName ?? ''],
    ['Returns', batch.counts.returns],
    ['Line items', batch.counts.lineItems],
    ['Statements', batch.counts.statements],
    ['Amended returns', batch.amendedReturns],
    ['Errors found', batch.errorCount],
  ];
  if (batch.outcome) {
    const o = batch.outcome;
    facts.push(['Scoring profile version', o.profileVersion], ['Cases opened', o.casesOpened], ['Scores not computed', o.failed]);
    if (o.median !== null) facts.push(['Median score', o.median]);
    for (const b of o.bands) facts.push([`Scores ${b.from}–${b.from + SCORE_BAND_WIDTH}`, `${b.returns} returns, ${b.cases} cases opened`]);
  }
  for (const [k, v] of facts) info.addRow({ k, v: typeof v === 'number' ? v : safeCellText(v) }).commit();
  info.commit();
  await wb.commit();
  return true;
}

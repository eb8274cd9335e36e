/**
 * Reading an upload: what kind of file each part is, its hash, and its tables as a stream
 * of rows. CSV files are read by ./csv-source.ts and XLSX workbooks by ./xlsx-source.ts,
 * both under the reading caps of ./caps.ts; neither holds a whole file in memory. The
 * server reads uploads through ./upload-worker.ts, in a worker thread with its own memory
 * limit, so a hostile file costs a refused upload, never the server.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import { BATCH_TABLES, normaliseHeader, sizeText, type BatchIssue, type BatchTable, type IntakeLimits } from '../../../shared/returns/batch-rows';
import { CapError, DEFAULT_READ_CAPS, EXCEL_MAX_ROWS, type ReadCaps } from './caps';
import { cellText } from './cell-text';
import { csvTables as csvTablesInline } from './csv-source';
import { uploadTables } from './upload-worker';
import { ROWS_PER_BATCH, SourceError, type BatchUpload, type RawRow, type TableSource, type UploadedFile } from './source-types';
import { WorkbookError, XlsxReader, type SheetRow } from './xlsx-source';

export { csvRows } from './csv-source';
export { ROWS_PER_BATCH, SourceError, type BatchUpload, type RawRow, type TableSource, type UploadedFile } from './source-types';

/** What the first bytes say a file is. */
export type Sniffed = 'zip' | 'ole' | 'pdf' | 'text' | 'binary';

/** Recognises a file by its first bytes. */
export function sniff(head: Buffer): Sniffed {
  if (head.length >= 4 && head[0] === 0x50 && head[1] === 0x4b && head[2] === 0x03 && head[3] === 0x04) return 'zip';
  if (head.length >= 4 && head[0] === 0xd0 && head[1] === 0xcf && head[2] === 0x11 && head[3] === 0xe0) return 'ole';
  if (head.subarray(0, 5).toString('latin1') === '%PDF-') return 'pdf';
  return head.includes(0) ? 'binary' : 'text';
}

async function readHead(path: string, n = 8192): Promise<Buffer> {
  const fh = await fs.promises.open(path, 'r');
  try {
    const buf = Buffer.alloc(n);
    const { bytesRead } = await fh.read(buf, 0, n, 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await fh.close();
  }
}

/**
 * Checks each file before anything is parsed: not empty, not too large, and of the kind
 * its part expects. These problems reject the upload without recording a batch.
 */
export async function checkUploadFiles(upload: BatchUpload, limits: IntakeLimits): Promise<BatchIssue[]> {
  const issues: BatchIssue[] = [];
  const whole = (file: string, message: string) => issues.push({ file, row: null, column: null, message });
  const files: [UploadedFile, 'xlsx' | 'csv'][] =
    upload.format === 'xlsx' ? [[upload.workbook, 'xlsx']] : Object.values(upload.parts).map((f) => [f as UploadedFile, 'csv']);
  for (const [f, want] of files) {
    const name = f.originalName;
    if (f.size === 0) {
      whole(name, 'The file is empty (0 bytes). Export it again from your program and upload the saved file.');
      continue;
    }
    if (f.size > limits.maxFileBytes) {
      whole(name, `The file is ${sizeText(f.size)}, more than the ${sizeText(limits.maxFileBytes)} a batch file may be. Split the batch into smaller batches.`);
      continue;
    }
    const kind = sniff(await readHead(f.path));
    const lower = name.toLowerCase();
    if (want === 'xlsx') {
      if (kind === 'ole') whole(name, 'This is an old Excel 97–2003 workbook (.xls). Open it in Excel and save it as an Excel Workbook (.xlsx).');
      else if (lower.endsWith('.xlsm')) whole(name, 'Macro-enabled workbooks (.xlsm) are not accepted. Save the workbook as an Excel Workbook (.xlsx).');
      else if (lower.endsWith('.ods')) whole(name, 'This is an OpenDocument spreadsheet (.ods). Save it as an Excel Workbook (.xlsx).');
      else if (kind === 'text')
        whole(
          name,
          'This is a text file, not an XLSX workbook. Send CSV files as the parts "returns" and "line_items" (and "statements"), or upload an .xlsx workbook.',
        );
      else if (kind !== 'zip')
        whole(
          name,
          `This is not an XLSX workbook${kind === 'pdf' ? ' (it is a PDF)' : ''}. Upload an .xlsx workbook with sheets returns and line_items, or CSV files.`,
        );
    } else {
      if (kind === 'zip')
        whole(
          name,
          'This is an XLSX workbook (or another ZIP file), not a CSV file. Upload a workbook as the single part "file", or export each sheet as CSV UTF-8.',
        );
      else if (kind === 'ole') whole(name, 'This is an old Excel 97–2003 file (.xls), not a CSV file. Save each sheet as CSV UTF-8, or the workbook as .xlsx.');
      else if (kind === 'pdf') whole(name, 'This is a PDF, not a CSV file. Export the data from its program as CSV UTF-8.');
      else if (kind === 'binary') whole(name, 'This file holds binary data, not CSV text. Export the data as CSV UTF-8.');
    }
  }
  return issues;
}

async function sha256File(path: string): Promise<string> {
  const h = createHash('sha256');
  for await (const chunk of fs.createReadStream(path, { highWaterMark: 1 << 20 })) h.update(chunk as Buffer);
  return h.digest('hex');
}

/**
 * SHA-256 that recognises the same upload again: of the workbook's bytes for XLSX; for CSV,
 * of the lines "table:sha256" of the parts sent, so the same files under the same parts
 * match whatever their names.
 */
export async function uploadHash(upload: BatchUpload): Promise<string> {
  if (upload.format === 'xlsx') return sha256File(upload.workbook.path);
  const lines: string[] = [];
  for (const t of BATCH_TABLES) {
    const f = upload.parts[t];
    if (f) lines.push(`${t}:${await sha256File(f.path)}`);
  }
  return createHash('sha256').update(lines.join('\n')).digest('hex');
}

/** Names of the files, for the batch record. */
export function uploadFileNames(upload: BatchUpload): string[] {
  if (upload.format === 'xlsx') return [upload.workbook.originalName];
  return BATCH_TABLES.flatMap((t) => (upload.parts[t] ? [upload.parts[t]!.originalName] : []));
}

// ---------------------------------------------------------------------------------------
// XLSX

function unreadable(file: UploadedFile, e: unknown): SourceError {
  if (e instanceof SourceError) return e;
  const issue = (message: string) => new SourceError({ file: file.originalName, row: null, column: null, message }, true);
  if (e instanceof CapError) return issue(e.message);
  if (e instanceof WorkbookError)
    return issue(`The workbook cannot be read: ${e.message}. Open it in Excel, save it as an Excel Workbook (.xlsx) and upload it again.`);
  return issue(
    `The workbook cannot be read (${e instanceof Error ? e.message : String(e)}). Open it in Excel, save it as an Excel Workbook (.xlsx) and upload it again.`,
  );
}

/** A sheet's rows as the intake reads them: cells as text, with the problems of cells that have none. */
function rawRow(r: SheetRow): RawRow {
  const values = r.values;
  const cells: string[] = [];
  let problems: (string | undefined)[] | null = null;
  for (let c = 1; c < values.length; c++) {
    const t = cellText(values[c]);
    cells.push(t.text);
    if (t.problem) {
      problems ??= [];
      problems[c - 1] = t.problem;
    }
  }
  return { row: r.number, cells, problems };
}

async function* sheetRows(reader: XlsxReader, sheet: { name: string; part: string }, file: UploadedFile): AsyncGenerator<RawRow[]> {
  try {
    let batch: RawRow[] = [];
    for await (const rows of reader.rows(sheet, `${file.originalName} › ${sheet.name}`)) {
      for (const r of rows) batch.push(rawRow(r));
      if (batch.length >= ROWS_PER_BATCH) {
        yield batch;
        batch = [];
      }
    }
    if (batch.length) yield batch;
  } catch (e) {
    throw unreadable(file, e);
  }
}

/**
 * The tables of a workbook: every sheet is reported through `onSheet` in the order of its
 * tabs (a null table for sheets other than returns, line_items and statements), and the
 * tables are then handed on returns first, as a CSV upload's are, so the line items never
 * wait on disk for their returns.
 */
async function* xlsxTablesInline(file: UploadedFile, onSheet: (name: string, table: BatchTable | null) => void, caps: ReadCaps): AsyncGenerator<TableSource> {
  let reader: XlsxReader;
  try {
    reader = await XlsxReader.open(file.path, caps, file.originalName);
  } catch (e) {
    throw unreadable(file, e);
  }
  try {
    const found: { table: BatchTable; sheet: { name: string; part: string } }[] = [];
    for (const sheet of reader.sheets) {
      const key = normaliseHeader(sheet.name);
      const table = (BATCH_TABLES as readonly string[]).includes(key) ? (key as BatchTable) : null;
      onSheet(sheet.name, table);
      if (table) found.push({ table, sheet });
    }
    found.sort((a, b) => BATCH_TABLES.indexOf(a.table) - BATCH_TABLES.indexOf(b.table));
    for (const { table, sheet } of found) yield { table, label: `${file.originalName} › ${sheet.name}`, rows: sheetRows(reader, sheet, file) };
  } finally {
    await reader.close();
  }
}

/** The tables of an upload, read in this thread (the worker thread runs this). */
export function uploadTablesInline(upload: BatchUpload, caps: ReadCaps, onSheet: (name: string, table: BatchTable | null) => void): AsyncIterable<TableSource> {
  return upload.format === 'xlsx' ? xlsxTablesInline(upload.workbook, onSheet, caps) : csvTablesInline(upload.parts, caps);
}

/**
 * Reading caps of a batch upload. The row cap sits just past a full Excel sheet and past
 * the configured row limit, so the intake's own row limit (with its per-table message)
 * speaks first; the cap only stops a file that would go on far beyond it.
 */
export function batchReadCaps(maxRows = EXCEL_MAX_ROWS): ReadCaps {
  return { ...DEFAULT_READ_CAPS, maxRows: Math.max(maxRows, EXCEL_MAX_ROWS) + 2 };
}

/**
 * The tables of a workbook, read in a worker thread (./upload-worker.ts): every sheet is
 * reported through `onSheet` in the order of its tabs, then the tables are handed on
 * returns first.
 */
export function xlsxTables(
  file: UploadedFile,
  onSheet: (name: string, table: BatchTable | null) => void,
  caps: ReadCaps = batchReadCaps(),
): AsyncGenerator<TableSource> {
  return uploadTables({ format: 'xlsx', workbook: file }, caps, onSheet);
}

/** The tables of a CSV upload, returns first, read in a worker thread (./upload-worker.ts). */
export function csvTables(parts: Partial<Record<BatchTable, UploadedFile>>, caps: ReadCaps = batchReadCaps()): AsyncGenerator<TableSource> {
  return uploadTables({ format: 'csv', parts }, caps, () => undefined);
}

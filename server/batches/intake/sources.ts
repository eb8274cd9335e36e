/**
 * Reading an upload: what kind of file each part is, its hash, and its tables as a stream
 * of rows. CSV files are decoded as strict UTF-8 and parsed by csv-parse; XLSX workbooks
 * are read sheet by sheet with exceljs's streaming WorkbookReader. Neither holds a whole
 * file in memory.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import { Readable } from 'node:stream';
import { CsvError, parse } from 'csv-parse';
import ExcelJS from 'exceljs';
import { BATCH_TABLES, normaliseHeader, sizeText, type BatchIssue, type BatchTable, type IntakeLimits } from '../../../shared/returns/batch-rows';
import { cellText } from './cell-text';

/** A file as received (multer wrote it to a temporary path). */
export interface UploadedFile {
  /** Name on the clerk's computer, e.g. "returns.csv". */
  originalName: string;
  path: string;
  size: number;
}

/** What was uploaded: one workbook, or one CSV file per table. */
export type BatchUpload =
  | { format: 'xlsx'; workbook: UploadedFile }
  | { format: 'csv'; parts: Partial<Record<BatchTable, UploadedFile>> };

/** One row as read: its number as a spreadsheet shows it, its cells as trimmed text. */
export interface RawRow {
  row: number;
  cells: string[];
  /** Per cell, why it could not be read (XLSX only: formulas without values, errors…). */
  problems: (string | undefined)[] | null;
}

/**
 * One table of the upload and its rows (the header row first), in batches of rows: one
 * await per batch instead of per row matters at a million rows.
 */
export interface TableSource {
  table: BatchTable;
  /** How errors name it: "returns.csv" or "batch.xlsx › returns". */
  label: string;
  rows: AsyncIterable<RawRow[]>;
}

/** Rows handed on per batch. */
const ROWS_PER_BATCH = 4096;

/** A file that cannot be read any further; `fatal` stops the whole upload. */
export class SourceError extends Error {
  constructor(
    readonly issue: BatchIssue,
    readonly fatal: boolean,
  ) {
    super(issue.message);
  }
}

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
      else if (kind === 'text') whole(name, 'This is a text file, not an XLSX workbook. Send CSV files as the parts "returns" and "line_items" (and "statements"), or upload an .xlsx workbook.');
      else if (kind !== 'zip') whole(name, `This is not an XLSX workbook${kind === 'pdf' ? ' (it is a PDF)' : ''}. Upload an .xlsx workbook with sheets returns and line_items, or CSV files.`);
    } else {
      if (kind === 'zip') whole(name, 'This is an XLSX workbook (or another ZIP file), not a CSV file. Upload a workbook as the single part "file", or export each sheet as CSV UTF-8.');
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
// CSV

class Utf8Problem extends Error {
  constructor(readonly line: number) {
    super('not UTF-8');
  }
}

/**
 * Decodes a file as strict UTF-8 in chunks (a leading byte-order mark is dropped). A file
 * saved in another encoding (Windows-1252, say) fails here instead of turning accented
 * names into replacement characters.
 */
async function* utf8Text(path: string, chunkBytes = 1 << 20): AsyncGenerator<string> {
  const decoder = new TextDecoder('utf-8', { fatal: true });
  let lines = 1;
  for await (const chunk of fs.createReadStream(path, { highWaterMark: chunkBytes })) {
    let text: string;
    try {
      text = decoder.decode(chunk as Buffer, { stream: true });
    } catch {
      const loose = new TextDecoder('utf-8').decode(chunk as Buffer);
      const bad = loose.indexOf('\uFFFD');
      throw new Utf8Problem(lines + countNewlines(loose, bad < 0 ? loose.length : bad));
    }
    lines += countNewlines(text, text.length);
    if (text) yield text;
  }
  const tail = decoder.decode();
  if (tail) yield tail;
}

function countNewlines(s: string, end: number): number {
  let n = 0;
  for (let i = s.indexOf('\n'); i >= 0 && i < end; i = s.indexOf('\n', i + 1)) n++;
  return n;
}

/**
 * Rows of one CSV file. Windows (CRLF) and Unix line endings are both read; blank lines
 * come through as blank rows (so row numbers match what a spreadsheet shows) and the
 * intake skips them.
 *
 * Files without a double quote (nearly every batch) are split by {@link plainCsvRows},
 * which reads them exactly as csv-parse does at a fraction of its cost; as soon as it meets
 * a quote (or a bare CR line ending) it stops, and csv-parse reads the file from the start,
 * passing over the rows already handed on, so quoted fields, CsvErrors and their line
 * numbers are exactly csv-parse's.
 * @param opts for tests: the read size, and `plain: false` to read with csv-parse alone
 */
export async function* csvRows(file: UploadedFile, opts: { chunkBytes?: number; plain?: boolean } = {}): AsyncGenerator<RawRow[]> {
  try {
    const done = opts.plain === false ? 0 : yield* plainCsvRows(file.path, opts.chunkBytes);
    if (done < 0) return;
    yield* parsedCsvRows(file.path, done, opts.chunkBytes);
  } catch (e) {
    const at = (line: number | null, message: string) => new SourceError({ file: file.originalName, row: line, column: null, message }, false);
    if (e instanceof Utf8Problem) {
      throw at(e.line, `The file is not UTF-8 text (an unreadable character on line ${e.line}). In Excel choose "Save as… CSV UTF-8 (Comma delimited)" and upload it again.`);
    }
    if (e instanceof CsvError) {
      const line = typeof (e as { lines?: number }).lines === 'number' ? (e as unknown as { lines: number }).lines : null;
      throw at(line, `The CSV cannot be read past line ${line}: ${csvProblem(e)} Check that every value containing a comma, quote or line break is enclosed in double quotes, and that quotes inside a value are doubled ("").`);
    }
    throw e;
  }
}

/** Splits one line (no quotes in it) into trimmed cells, as csv-parse + trim would. */
function plainCells(line: string): string[] {
  const cells = line.split(',');
  for (let i = 0; i < cells.length; i++) cells[i] = cells[i].trim();
  return cells;
}

/**
 * The unquoted case of csv-parse's reading (`bom`, no quotes, the record delimiter found
 * as csv-parse finds it: the first CRLF or LF, and then only that one; a CR or LF that is
 * not the delimiter is an ordinary character of its field, which the trim may remove).
 * @returns -1 when the whole file was read; otherwise the number of rows handed on before
 *   something only csv-parse reads (a double quote, or a bare CR as the line ending)
 */
async function* plainCsvRows(path: string, chunkBytes?: number): AsyncGenerator<RawRow[], number> {
  let row = 0;
  let carry = '';
  let delim = ''; // '' until the first line ending is seen
  let first = true;
  let batch: RawRow[] = [];
  let stopped = false;
  for await (const chunk of utf8Text(path, chunkBytes)) {
    let text = chunk;
    if (first) {
      first = false;
      if (text.charCodeAt(0) === 0xfeff) text = text.slice(1); // a second BOM (csv-parse's bom option)
    }
    if (text.indexOf('"') >= 0) {
      stopped = true;
      break;
    }
    const s = carry === '' ? text : carry + text;
    if (delim === '') {
      const nl = s.indexOf('\n');
      const cr = s.indexOf('\r');
      if (cr >= 0 && (nl < 0 || cr < nl)) {
        if (cr + 1 === s.length) {
          carry = s; // CR at the end of the chunk: CRLF or CR, the next chunk tells
          continue;
        }
        if (s.charCodeAt(cr + 1) !== 10) {
          stopped = true; // old Mac CR line endings: csv-parse
          break;
        }
        delim = '\r\n';
      } else if (nl >= 0) delim = '\n';
      else {
        carry = s;
        continue;
      }
    }
    const dl = delim.length;
    let start = 0;
    for (let e = s.indexOf(delim); e >= 0; e = s.indexOf(delim, start)) {
      batch.push({ row: ++row, cells: plainCells(s.slice(start, e)), problems: null });
      start = e + dl;
      if (batch.length >= ROWS_PER_BATCH) {
        yield batch;
        batch = [];
      }
    }
    carry = s.slice(start);
  }
  // Whole lines read so far were csv-parse's records too; hand them on before any stop.
  if (!stopped && carry !== '') {
    if (delim === '' && carry.charCodeAt(carry.length - 1) === 13) stopped = true; // ends in a lone CR: csv-parse
    else batch.push({ row: ++row, cells: plainCells(carry), problems: null });
  }
  if (batch.length) yield batch;
  return stopped ? row : -1;
}

/** Rows of one CSV file by csv-parse, the first `skip` rows not handed on (already were). */
async function* parsedCsvRows(path: string, skip: number, chunkBytes?: number): AsyncGenerator<RawRow[]> {
  const parser = parse({ bom: true, relax_column_count: true, skip_empty_lines: false, relax_quotes: false });
  const source = Readable.from(utf8Text(path, chunkBytes));
  source.on('error', (e) => parser.destroy(e));
  source.pipe(parser);
  // Records are taken with read() in a synchronous loop and handed on in batches; iterating
  // the parser record by record would cost a promise per row.
  let ended = false;
  let failure: unknown = null;
  let wake: (() => void) | null = null;
  const signal = () => {
    const w = wake;
    wake = null;
    w?.();
  };
  parser.on('readable', signal);
  parser.on('end', () => {
    ended = true;
    signal();
  });
  parser.on('error', (e) => {
    failure = e;
    signal();
  });
  let row = 0;
  try {
    for (;;) {
      const batch: RawRow[] = [];
      let record: string[] | null;
      while (batch.length < ROWS_PER_BATCH && (record = parser.read() as string[] | null) !== null) {
        row++;
        if (row <= skip) continue;
        for (let i = 0; i < record.length; i++) record[i] = record[i].trim();
        batch.push({ row, cells: record, problems: null });
      }
      if (batch.length) {
        yield batch;
        continue;
      }
      if (failure) {
        if (failure instanceof CsvError && typeof (failure as { lines?: number }).lines !== 'number') Object.assign(failure, { lines: row + 1 });
        throw failure;
      }
      if (ended) return;
      await new Promise<void>((resolve) => (wake = resolve));
    }
  } finally {
    source.destroy();
    parser.destroy();
  }
}

function csvProblem(e: CsvError): string {
  switch (e.code) {
    case 'CSV_QUOTE_NOT_CLOSED':
      return 'a quoted value is opened and never closed.';
    case 'CSV_INVALID_CLOSING_QUOTE':
    case 'CSV_NON_TRIMABLE_CHAR_AFTER_CLOSING_QUOTE':
      return 'there is text right after a closing quote.';
    default:
      return `${e.message.replace(/\.$/, '')}.`;
  }
}

/** The tables of a CSV upload, returns first (the line items refer to them). */
export async function* csvTables(parts: Partial<Record<BatchTable, UploadedFile>>): AsyncGenerator<TableSource> {
  for (const table of BATCH_TABLES) {
    const f = parts[table];
    if (f) yield { table, label: f.originalName, rows: csvRows(f) };
  }
}

// ---------------------------------------------------------------------------------------
// XLSX

/** A worksheet as exceljs's streaming reader yields it (its typings omit these). */
interface StreamedWorksheet extends AsyncIterable<ExcelJS.Row> {
  name?: string;
}

async function* sheetRows(ws: StreamedWorksheet, file: UploadedFile): AsyncGenerator<RawRow[]> {
  try {
    let batch: RawRow[] = [];
    for await (const r of readSheetRows(ws)) {
      batch.push(r);
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

function unreadable(file: UploadedFile, e: unknown): SourceError {
  if (e instanceof SourceError) return e;
  return new SourceError(
    {
      file: file.originalName,
      row: null,
      column: null,
      message: `The workbook cannot be read (${e instanceof Error ? e.message : String(e)}). Open it in Excel, save it as an Excel Workbook (.xlsx) and upload it again.`,
    },
    true,
  );
}

async function* readSheetRows(ws: StreamedWorksheet): AsyncGenerator<RawRow> {
  for await (const r of ws) {
    const values = r.values as unknown[];
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
    yield { row: r.number, cells, problems };
  }
}

/**
 * The sheets of a workbook in the order they are stored. Sheets other than returns,
 * line_items and statements are reported through `onSheet` with a null table and skipped.
 */
export async function* xlsxTables(file: UploadedFile, onSheet: (name: string, table: BatchTable | null) => void): AsyncGenerator<TableSource> {
  const input = fs.createReadStream(file.path, { highWaterMark: 1 << 20 });
  const reader = new ExcelJS.stream.xlsx.WorkbookReader(input, {
    worksheets: 'emit',
    sharedStrings: 'cache',
    hyperlinks: 'ignore',
    styles: 'ignore',
    entries: 'ignore',
  });
  try {
    for await (const ws of reader as unknown as AsyncIterable<StreamedWorksheet>) {
      const name = ws.name ?? '';
      const key = normaliseHeader(name);
      const table = (BATCH_TABLES as readonly string[]).includes(key) ? (key as BatchTable) : null;
      onSheet(name, table);
      if (table) yield { table, label: `${file.originalName} › ${name}`, rows: sheetRows(ws, file) };
    }
  } catch (e) {
    throw unreadable(file, e);
  } finally {
    input.destroy();
  }
}

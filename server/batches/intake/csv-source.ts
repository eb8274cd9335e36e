/**
 * Reading CSV files of a batch as streams of rows, under the reading caps (./caps.ts). Files
 * are decoded as strict UTF-8 and split by a plain splitter, or by csv-parse once a quote
 * appears; neither holds a whole file in memory.
 */
import fs from 'node:fs';
import { Readable } from 'node:stream';
import { CsvError, parse } from 'csv-parse';
import { BATCH_TABLES, type BatchTable } from '../../../shared/returns/batch-rows';
import { CapCounter, CapError, capError, DEFAULT_READ_CAPS, type ReadCaps } from './caps';
import { ROWS_PER_BATCH, SourceError, type RawRow, type TableSource, type UploadedFile } from './source-types';

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
export async function* csvRows(file: UploadedFile, opts: { chunkBytes?: number; plain?: boolean; caps?: ReadCaps } = {}): AsyncGenerator<RawRow[]> {
  const caps = opts.caps ?? DEFAULT_READ_CAPS;
  const limits = new RowLimits(caps, file.originalName);
  try {
    const done = opts.plain === false ? 0 : yield* plainCsvRows(file.path, limits, opts.chunkBytes);
    if (done < 0) return;
    yield* parsedCsvRows(file.path, done, limits, opts.chunkBytes);
  } catch (e) {
    const at = (line: number | null, message: string) => new SourceError({ file: file.originalName, row: line, column: null, message }, false);
    if (e instanceof CapError) throw new SourceError({ file: file.originalName, row: null, column: null, message: e.message }, true);
    if (e instanceof CsvError && e.code === 'CSV_MAX_RECORD_SIZE')
      throw new SourceError({ file: file.originalName, row: null, column: null, message: capError('maxLineChars', caps, file.originalName).message }, true);
    if (e instanceof Utf8Problem) {
      throw at(
        e.line,
        `The file is not UTF-8 text (an unreadable character on line ${e.line}). In Excel choose "Save as… CSV UTF-8 (Comma delimited)" and upload it again.`,
      );
    }
    if (e instanceof CsvError) {
      const line = typeof (e as { lines?: number }).lines === 'number' ? (e as unknown as { lines: number }).lines : null;
      throw at(
        line,
        `The CSV cannot be read past line ${line}: ${csvProblem(e)} Check that every value containing a comma, quote or line break is enclosed in double quotes, and that quotes inside a value are doubled ("").`,
      );
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
async function* plainCsvRows(path: string, limits: RowLimits, chunkBytes?: number): AsyncGenerator<RawRow[], number> {
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
    // A line that never ends would grow here without bound: the cap stops it.
    if (carry.length > limits.caps.maxLineChars) throw capError('maxLineChars', limits.caps, limits.where);
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
      const cells = plainCells(s.slice(start, e));
      limits.count(cells);
      batch.push({ row: ++row, cells, problems: null });
      start = e + dl;
      if (batch.length >= ROWS_PER_BATCH) {
        yield batch;
        batch = [];
      }
    }
    carry = s.slice(start);
  }
  if (carry.length > limits.caps.maxLineChars) throw capError('maxLineChars', limits.caps, limits.where);
  // Whole lines read so far were csv-parse's records too; hand them on before any stop.
  if (!stopped && carry !== '') {
    if (delim === '' && carry.charCodeAt(carry.length - 1) === 13)
      stopped = true; // ends in a lone CR: csv-parse
    else {
      const cells = plainCells(carry);
      limits.count(cells);
      batch.push({ row: ++row, cells, problems: null });
    }
  }
  if (batch.length) yield batch;
  return stopped ? row : -1;
}

/** Rows of one CSV file by csv-parse, the first `skip` rows not handed on (already were). */
async function* parsedCsvRows(path: string, skip: number, limits: RowLimits, chunkBytes?: number): AsyncGenerator<RawRow[]> {
  const parser = parse({ bom: true, relax_column_count: true, skip_empty_lines: false, relax_quotes: false, max_record_size: limits.caps.maxLineChars });
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
        limits.count(record);
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
export async function* csvTables(parts: Partial<Record<BatchTable, UploadedFile>>, caps: ReadCaps = DEFAULT_READ_CAPS): AsyncGenerator<TableSource> {
  for (const table of BATCH_TABLES) {
    const f = parts[table];
    if (f) yield { table, label: f.originalName, rows: csvRows(f, { caps }) };
  }
}

/** Counts the rows that hold something (blank lines are free) and their cells against the caps. */
class RowLimits {
  private readonly counter: CapCounter;
  private rows = 0;

  constructor(
    readonly caps: ReadCaps,
    readonly where: string,
  ) {
    this.counter = new CapCounter(caps);
  }

  count(cells: string[]): void {
    for (let i = 0; i < cells.length; i++) {
      if (cells[i] !== '') {
        this.counter.row(++this.rows, cells.length, this.where);
        return;
      }
    }
  }
}

/**
 * Reading a column of amounts from a file: a text file with one amount a line, or a CSV or
 * XLSX file with a header row (docs/design.md#command-line). Shared by the `digits` command line
 * and `POST /api/analyses/digits`.
 *
 * Without a column name, a file with one column uses it, otherwise a column called
 * "amount" (any case). A one-column file whose first cell is an amount has no header. In
 * XLSX the first sheet having the column is read; number cells are read like the batch
 * intake reads them (server/batches/intake/cell-text.ts): within a millionth of a cent of a
 * cent amount is that amount. Files are streamed, never read whole, under the reading caps
 * of server/batches/intake/caps.ts (rows, cells, shared strings, inflated size); the server
 * runs this in a worker thread (server/batches/intake/upload-worker.ts).
 *
 * Amounts of any size are read (shared/digits/wide.ts): ordinary ones as cents, the rest as
 * their digits. With a split column (`by`), each amount also carries the text of that
 * column in its row, so the amounts can be profiled group by group or totalled by category.
 */
import fs from 'node:fs';
import path from 'node:path';
import readline from 'node:readline';
import { CsvError, parse as parseCsv } from 'csv-parse';
import { AmountParseError } from '../../shared/digits/parse';
import { AmountColumnBuilder, amountFromText, amountFromValue, type WideAmount } from '../../shared/digits/wide';
import { CapCounter, capError, DEFAULT_READ_CAPS, type ReadCaps } from '../batches/intake/caps';
import { WorkbookError, XlsxReader } from '../batches/intake/xlsx-source';

/** The file cannot be used as asked (wrong column, unreadable, old format…): one clear line. */
export class AmountFileError extends Error {}

/** The groups of a split column: the group of every amount, by its list (cents or wide). */
export interface AmountGroups {
  /** The split column's name as in the file. */
  column: string;
  /** The distinct texts of the split column, in order of first appearance. */
  names: string[];
  /** Group index (into names) of each ordinary amount, in the order of the cents. */
  ofCents: Int32Array;
  /** Group index of each wide amount. */
  ofWide: number[];
}

/** What a file gave: the amounts, what was read, and the groups when split. */
export interface AmountFileResult {
  /** Signed integer cents of the ordinary amounts. */
  cents: Float64Array;
  /** The amounts too large for cents (shared/digits/wide.ts). */
  wide: WideAmount[];
  /** Which part of the file was read, for people ("column \"amount\""). */
  what: string;
  /** The groups, when a split column was asked for. */
  groups?: AmountGroups;
}

/** Most distinct groups a split column may have (each is profiled apart). */
export const MAX_GROUPS = 5000;

/** Amounts as read, with their groups when the file is split. */
class ColumnSink {
  readonly amounts = new AmountColumnBuilder();
  private ofCents = new Int32Array(1024);
  private readonly ofWide: number[] = [];
  private readonly names: string[] = [];
  private readonly index = new Map<string, number>();
  /** The split column's name as in the file, once its header is read. */
  byName: string | null = null;

  /** Number of amounts taken. */
  get length(): number {
    return this.amounts.length;
  }

  push(a: number | WideAmount, group: string | null, position: string): void {
    const at = this.amounts.centsLength;
    const went = this.amounts.push(a);
    if (group === null) return;
    let g = this.index.get(group);
    if (g === undefined) {
      if (this.names.length >= MAX_GROUPS) {
        throw new AmountFileError(
          `The split column has more than ${MAX_GROUPS.toLocaleString('en-US')} different values (at ${position}); split by a column with fewer groups`,
        );
      }
      g = this.names.length;
      this.names.push(group);
      this.index.set(group, g);
    }
    if (went === 'wide') this.ofWide.push(g);
    else {
      if (at === this.ofCents.length) {
        const bigger = new Int32Array(this.ofCents.length * 2);
        bigger.set(this.ofCents);
        this.ofCents = bigger;
      }
      this.ofCents[at] = g;
    }
  }

  result(what: string): AmountFileResult {
    const { cents, wide } = this.amounts.column();
    if (this.byName === null) return { cents, wide, what };
    return { cents, wide, what, groups: { column: this.byName, names: this.names, ofCents: this.ofCents.slice(0, cents.length), ofWide: this.ofWide } };
  }
}

async function readTextFile(file: string, out: ColumnSink, caps: ReadCaps): Promise<string> {
  const rl = readline.createInterface({ input: fs.createReadStream(file), crlfDelay: Infinity });
  const counter = new CapCounter(caps);
  const where = path.basename(file);
  let line = 0;
  for await (const raw of rl) {
    line++;
    if (raw.length > caps.maxLineChars) throw capError('maxLineChars', caps, where);
    const text = (line === 1 ? raw.replace(/^\uFEFF/, '') : raw).trim();
    if (text === '') continue;
    counter.row(out.length + 1, 1, where);
    out.push(amountFromText(text, `line ${line}`), null, `line ${line}`);
  }
  return 'one amount a line';
}

/** Which column of a header row holds the amounts; null = the file has no header row. */
function chooseColumn(header: string[], wanted: string | null, where: string): number | null {
  const names = header.map((h) => h.trim());
  if (wanted !== null) {
    let i = names.indexOf(wanted);
    if (i < 0) i = names.findIndex((h) => h.toLowerCase() === wanted.toLowerCase());
    if (i < 0) throw new AmountFileError(`${where} has no column "${wanted}" (columns: ${names.map((n) => `"${n}"`).join(', ')})`);
    return i;
  }
  if (names.length === 1) {
    return isAmountText(names[0]) ? null : 0;
  }
  const i = names.findIndex((h) => h.toLowerCase() === 'amount');
  if (i >= 0) return i;
  throw new AmountFileError(`${where} has several columns (${names.map((n) => `"${n}"`).join(', ')}); choose one with --column NAME`);
}

function isAmountText(text: string): boolean {
  try {
    amountFromText(text.trim(), '');
    return true;
  } catch {
    return false;
  }
}

/** The split column's index in a header row. */
function chooseSplit(names: string[], by: string, amountIndex: number, where: string): number {
  const trimmed = names.map((h) => h.trim());
  let i = trimmed.indexOf(by);
  if (i < 0) i = trimmed.findIndex((h) => h.toLowerCase() === by.toLowerCase());
  if (i < 0) throw new AmountFileError(`${where} has no column "${by}" to split by (columns: ${trimmed.map((n) => `"${n}"`).join(', ')})`);
  if (i === amountIndex) throw new AmountFileError(`${where}: the split column "${by}" is the amounts column; choose another column to split by`);
  return i;
}

async function readCsvFile(file: string, wanted: string | null, by: string | null, out: ColumnSink, caps: ReadCaps): Promise<string> {
  const parser = fs
    .createReadStream(file)
    .pipe(parseCsv({ bom: true, info: true, skip_empty_lines: true, relax_column_count: true, max_record_size: caps.maxLineChars }));
  const counter = new CapCounter(caps);
  const where = path.basename(file);
  let rows = 0;
  let index = -1; // column of the amounts, -1 until the first row is read
  let split = -1;
  let name = '';
  try {
    for await (const item of parser as AsyncIterable<{ record: string[]; info: { lines: number } }>) {
      const { record, info } = item;
      counter.row(++rows, record.length, where);
      if (index < 0) {
        const col = chooseColumn(record, wanted, where);
        if (col !== null) {
          index = col;
          name = record[col].trim();
          if (by !== null) {
            split = chooseSplit(record, by, col, where);
            out.byName = record[split].trim();
          }
          continue;
        }
        if (by !== null) throw new AmountFileError(`${where} has no header row, so it has no column "${by}" to split by`);
        index = 0; // no header: this row is an amount too
      }
      const position = name ? `line ${info.lines}, column "${name}"` : `line ${info.lines}`;
      const cell = record[index];
      if (cell === undefined) throw new AmountParseError(undefined, position, 'is missing (the row is too short)');
      out.push(amountFromText(cell.trim(), position), split >= 0 ? (record[split] ?? '').trim() : null, position);
    }
  } catch (e) {
    if (e instanceof CsvError && e.code === 'CSV_MAX_RECORD_SIZE') throw capError('maxLineChars', caps, where);
    throw e;
  } finally {
    parser.destroy();
  }
  if (index < 0) return 'empty CSV file';
  return name ? `column "${name}"${out.byName ? ` by "${out.byName}"` : ''}` : 'one column, no header';
}

/**
 * An XLSX cell as an amount, under the batch intake's reading rules (see the module comment);
 * a number cell of 10^13 or more is read through its shortest decimal text (any size).
 */
function cellCents(v: unknown, position: string): number | WideAmount {
  if (typeof v === 'number') {
    const c = Math.round(v * 100);
    if (Number.isFinite(v) && Math.abs(v) < 1e13 && Math.abs(v * 100 - c) < 1e-6) return amountFromValue(c / 100, position);
    return amountFromValue(v, position);
  }
  if (typeof v === 'string') return amountFromText(v.trim(), position);
  if (v === null || v === undefined) throw new AmountParseError('', position, 'is empty');
  if (typeof v === 'object' && !(v instanceof Date)) {
    const o = v as Record<string, unknown>;
    if ('formula' in o || 'sharedFormula' in o) {
      if (o.result === undefined || o.result === null) {
        throw new AmountParseError('a formula', position, 'has no saved value; open the workbook in Excel and save it');
      }
      return cellCents(o.result, position);
    }
    if (Array.isArray(o.richText)) {
      return cellCents((o.richText as { text?: string }[]).map((r) => r.text ?? '').join(''), position);
    }
    if (typeof o.text === 'string') return cellCents(o.text, position);
  }
  throw new AmountParseError(v, position, 'is not a number or a decimal amount');
}

function cellHeader(v: unknown): string {
  if (typeof v === 'string') return v;
  if (v instanceof Date) return v.toISOString().slice(0, 10);
  if (v && typeof v === 'object' && 'result' in v) return cellHeader((v as { result: unknown }).result);
  if (typeof v === 'number') return String(v);
  if (v && typeof v === 'object' && Array.isArray((v as { richText?: unknown }).richText)) {
    return (v as { richText: { text?: string }[] }).richText.map((r) => r.text ?? '').join('');
  }
  return v === null || v === undefined ? '' : String(v);
}

/** A workbook that cannot be read as XLSX (when opened or part-way through), for a person. */
function unreadableWorkbook(file: string, e: WorkbookError): AmountFileError {
  return new AmountFileError(`${path.basename(file)}: ${e.message}. Open it in Excel and save it as an Excel Workbook (.xlsx)`);
}

async function readXlsxFile(file: string, wanted: string | null, by: string | null, out: ColumnSink, caps: ReadCaps): Promise<string> {
  let reader: XlsxReader;
  try {
    reader = await XlsxReader.open(file, caps, path.basename(file));
  } catch (e) {
    throw e instanceof WorkbookError ? unreadableWorkbook(file, e) : e;
  }
  const skipped: string[] = [];
  try {
    for (const ws of reader.sheets) {
      const sheet = ws.name || `sheet ${skipped.length + 1}`;
      let index = -1; // column of the amounts (0-based), -1 until the first row is read
      let split = -1;
      let name = '';
      let next = false;
      for await (const rows of reader.rows(ws, `${path.basename(file)}, sheet "${sheet}"`)) {
        for (const row of rows) {
          const values = row.values;
          if (index < 0) {
            const header = values.slice(1).map(cellHeader);
            if (header.every((h) => h.trim() === '')) continue; // exceljs never gave empty rows
            let col: number | null;
            try {
              col = chooseColumn(header, wanted, `sheet "${sheet}"`);
            } catch (e) {
              if (!(e instanceof AmountFileError)) throw e;
              next = true; // the column is not on this sheet: look at the next one
              break;
            }
            if (col !== null) {
              index = col;
              name = header[col].trim();
              if (by !== null) {
                split = chooseSplit(header, by, col, `sheet "${sheet}"`);
                out.byName = header[split].trim();
              }
              continue;
            }
            if (by !== null) throw new AmountFileError(`sheet "${sheet}" has no header row, so it has no column "${by}" to split by`);
            index = 0; // no header: this row is an amount too
          }
          if (values.length <= 1) continue; // an empty row (formatting only)
          const position = `sheet "${sheet}" cell ${columnLetter(index + 1)}${row.number}`;
          out.push(cellCents(values[index + 1], position), split >= 0 ? cellHeader(values[split + 1]).trim() : null, position);
        }
        if (next) break;
      }
      if (index >= 0) {
        return name ? `sheet "${sheet}", column "${name}"${out.byName ? ` by "${out.byName}"` : ''}` : `sheet "${sheet}", one column, no header`;
      }
      skipped.push(`"${sheet}"`);
    }
  } catch (e) {
    throw e instanceof WorkbookError ? unreadableWorkbook(file, e) : e;
  } finally {
    await reader.close();
  }
  const sheets = skipped.join(', ') || 'none';
  if (wanted !== null) throw new AmountFileError(`${path.basename(file)}: no sheet has a column "${wanted}" (sheets: ${sheets})`);
  throw new AmountFileError(`${path.basename(file)}: no sheet has a single column or an "amount" column (sheets: ${sheets}); choose one with --column NAME`);
}

function columnLetter(n: number): string {
  let s = '';
  for (let k = n; k > 0; k = Math.floor((k - 1) / 26)) s = String.fromCharCode(65 + ((k - 1) % 26)) + s;
  return s;
}

/**
 * Reads every amount of a file (any size), and with `by` the split column's text beside each.
 *
 * @param file path of the file
 * @param column the column to read (CSV/XLSX), or null to pick it as described above
 * @param kind 'csv' | 'xlsx' | 'text'; by default from the file's extension
 * @param caps reading limits (server/batches/intake/caps.ts)
 * @param by the column to split by (CSV/XLSX with a header row), or null
 * @returns the amounts (cents and wide), a description of what was read, and the groups
 * @throws AmountFileError or AmountParseError (naming the offending value and its position),
 *   CapError (a reading limit crossed)
 */
export async function readAmountsFile(
  file: string,
  column: string | null,
  kind?: 'csv' | 'xlsx' | 'text',
  caps: ReadCaps = DEFAULT_READ_CAPS,
  by: string | null = null,
): Promise<AmountFileResult> {
  const ext = path.extname(file).toLowerCase();
  const k = kind ?? (ext === '.csv' ? 'csv' : ext === '.xlsx' ? 'xlsx' : 'text');
  if (ext === '.xls') throw new AmountFileError(`${path.basename(file)}: old .xls workbooks are not read; save it as .xlsx`);
  if (column !== null && k === 'text') throw new AmountFileError('A column name applies to CSV and XLSX files; a text file has one amount a line');
  if (by !== null && k === 'text')
    throw new AmountFileError('A split column applies to CSV and XLSX files with a header row; a text file has one amount a line');
  const sink = new ColumnSink();
  const what =
    k === 'csv'
      ? await readCsvFile(file, column, by, sink, caps)
      : k === 'xlsx'
        ? await readXlsxFile(file, column, by, sink, caps)
        : await readTextFile(file, sink, caps);
  return sink.result(what);
}

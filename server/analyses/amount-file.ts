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
 */
import fs from 'node:fs';
import path from 'node:path';
import readline from 'node:readline';
import { CsvError, parse as parseCsv } from 'csv-parse';
import { AmountParseError, centsFromNumber, centsFromString } from '../../shared/digits/parse';
import { CapCounter, capError, DEFAULT_READ_CAPS, type ReadCaps } from '../batches/intake/caps';
import { WorkbookError, XlsxReader } from '../batches/intake/xlsx-source';

/** The file cannot be used as asked (wrong column, unreadable, old format…): one clear line. */
export class AmountFileError extends Error {}

/** Growable array of cents: files are read as streams, their length is not known up front. */
export class CentsBuffer {
  private data = new Float64Array(1024);
  length = 0;

  push(c: number): void {
    if (this.length === this.data.length) {
      const bigger = new Float64Array(this.data.length * 2);
      bigger.set(this.data);
      this.data = bigger;
    }
    this.data[this.length++] = c;
  }

  values(): Float64Array {
    return this.data.subarray(0, this.length);
  }
}

async function readTextFile(file: string, out: CentsBuffer, caps: ReadCaps): Promise<string> {
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
    out.push(centsFromString(text, `line ${line}`));
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
    centsFromString(text.trim(), '');
    return true;
  } catch {
    return false;
  }
}

async function readCsvFile(file: string, wanted: string | null, out: CentsBuffer, caps: ReadCaps): Promise<string> {
  const parser = fs
    .createReadStream(file)
    .pipe(parseCsv({ bom: true, info: true, skip_empty_lines: true, relax_column_count: true, max_record_size: caps.maxLineChars }));
  const counter = new CapCounter(caps);
  const where = path.basename(file);
  let rows = 0;
  let index = -1; // column of the amounts, -1 until the first row is read
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
          continue;
        }
        index = 0; // no header: this row is an amount too
      }
      const position = name ? `line ${info.lines}, column "${name}"` : `line ${info.lines}`;
      const cell = record[index];
      if (cell === undefined) throw new AmountParseError(undefined, position, 'is missing (the row is too short)');
      out.push(centsFromString(cell.trim(), position));
    }
  } catch (e) {
    if (e instanceof CsvError && e.code === 'CSV_MAX_RECORD_SIZE') throw capError('maxLineChars', caps, where);
    throw e;
  } finally {
    parser.destroy();
  }
  if (index < 0) return 'empty CSV file';
  return name ? `column "${name}"` : 'one column, no header';
}

/** An XLSX cell as cents, under the batch intake's reading rules (see the module comment). */
function cellCents(v: unknown, position: string): number {
  if (typeof v === 'number') {
    const c = Math.round(v * 100);
    if (Number.isFinite(v) && Math.abs(v * 100 - c) < 1e-6) return centsFromNumber(c / 100, position);
    return centsFromNumber(v, position);
  }
  if (typeof v === 'string') return centsFromString(v.trim(), position);
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

async function readXlsxFile(file: string, wanted: string | null, out: CentsBuffer, caps: ReadCaps): Promise<string> {
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
              continue;
            }
            index = 0; // no header: this row is an amount too
          }
          if (values.length <= 1) continue; // an empty row (formatting only)
          const position = `sheet "${sheet}" cell ${columnLetter(index + 1)}${row.number}`;
          out.push(cellCents(values[index + 1], position));
        }
        if (next) break;
      }
      if (index >= 0) {
        return name ? `sheet "${sheet}", column "${name}"` : `sheet "${sheet}", one column, no header`;
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
 * Reads every amount of a file into cents.
 *
 * @param file path of the file
 * @param column the column to read (CSV/XLSX), or null to pick it as described above
 * @param kind 'csv' | 'xlsx' | 'text'; by default from the file's extension
 * @param caps reading limits (server/batches/intake/caps.ts)
 * @returns the amounts (signed integer cents) and a description of what was read
 * @throws AmountFileError or AmountParseError (naming the offending value and its position),
 *   CapError (a reading limit crossed)
 */
export async function readAmountsFile(
  file: string,
  column: string | null,
  kind?: 'csv' | 'xlsx' | 'text',
  caps: ReadCaps = DEFAULT_READ_CAPS,
): Promise<{ cents: Float64Array; what: string }> {
  const ext = path.extname(file).toLowerCase();
  const k = kind ?? (ext === '.csv' ? 'csv' : ext === '.xlsx' ? 'xlsx' : 'text');
  if (ext === '.xls') throw new AmountFileError(`${path.basename(file)}: old .xls workbooks are not read; save it as .xlsx`);
  if (column !== null && k === 'text') throw new AmountFileError('A column name applies to CSV and XLSX files; a text file has one amount a line');
  const cents = new CentsBuffer();
  const what =
    k === 'csv'
      ? await readCsvFile(file, column, cents, caps)
      : k === 'xlsx'
        ? await readXlsxFile(file, column, cents, caps)
        : await readTextFile(file, cents, caps);
  return { cents: cents.values(), what };
}

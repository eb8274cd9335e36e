/**
 * Writes generated Aldermere batches to files, as a clerk would upload them: three CSV
 * files, or one XLSX workbook, plus the answer file with the planted returns (always a
 * separate file, never inside the batch). Streams rows, so a million line items need
 * no more memory than a thousand.
 */
import fs from 'node:fs';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { generateReturns, HABIT_KINDS, PLANT_KINDS, type GenerateOptions, type PlantLabel, type ReturnAnswer } from '../../shared/demo/aldermere';
import { columnsOf, type BatchTable } from '../../shared/returns/batch-rows';

/** Counts of what was written. */
export interface WrittenBatch {
  files: Partial<Record<BatchTable, string>>;
  counts: { returns: number; lineItems: number; statements: number };
  /** The planted returns' answers. */
  labels: PlantLabel[];
  /** Every return's answer: planted kinds (empty when typical) and habits. */
  answers: ReturnAnswer[];
}

/** One CSV field: quoted when it holds a comma, quote or line break. */
export function csvField(v: string): string {
  return /[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

class LineWriter {
  private buf = '';
  constructor(private readonly out: fs.WriteStream) {}
  async add(line: string): Promise<void> {
    this.buf += line;
    if (this.buf.length > 1 << 20) await this.flush();
  }
  async flush(): Promise<void> {
    if (!this.buf) return;
    const ok = this.out.write(this.buf);
    this.buf = '';
    if (!ok) await new Promise((r) => this.out.once('drain', r));
  }
  async close(): Promise<void> {
    await this.flush();
    await new Promise<void>((res, rej) => this.out.end((e?: Error | null) => (e ? rej(e) : res())));
  }
}

/**
 * Writes returns.csv, line_items.csv and statements.csv into `dir`.
 * @param format.crlf Windows line endings (default true: what Excel writes)
 * @param format.bom a UTF-8 byte-order mark first (Excel's "CSV UTF-8")
 */
export async function writeCsvBatch(dir: string, opts: GenerateOptions, format: { crlf?: boolean; bom?: boolean } = {}): Promise<WrittenBatch> {
  fs.mkdirSync(dir, { recursive: true });
  const eol = format.crlf === false ? '\n' : '\r\n';
  const files: Record<BatchTable, string> = {
    returns: path.join(dir, 'returns.csv'),
    line_items: path.join(dir, 'line_items.csv'),
    statements: path.join(dir, 'statements.csv'),
  };
  const writers = Object.fromEntries((Object.keys(files) as BatchTable[]).map((t) => [t, new LineWriter(fs.createWriteStream(files[t]))])) as Record<
    BatchTable,
    LineWriter
  >;
  for (const t of Object.keys(files) as BatchTable[]) await writers[t].add((format.bom ? '\uFEFF' : '') + columnsOf(t).join(',') + eol);
  const counts = { returns: 0, lineItems: 0, statements: 0 };
  const labels: PlantLabel[] = [];
  const answers: ReturnAnswer[] = [];
  const retCols = columnsOf('returns') as (keyof import('../../shared/demo/aldermere').ReturnFileRow)[];
  for (const g of generateReturns(opts)) {
    await writers.returns.add(retCols.map((c) => csvField(g.ret[c])).join(',') + eol);
    counts.returns++;
    for (const l of g.lines) await writers.line_items.add(`${l.return_ref},${l.line_code},${l.amount}${eol}`);
    counts.lineItems += g.lines.length;
    for (const s of g.statements) await writers.statements.add(`${s.tin},${s.tax_year},${s.kind},${csvField(s.payer)},${s.amount}${eol}`);
    counts.statements += g.statements.length;
    if (g.label) labels.push(g.label);
    answers.push(g.answer);
  }
  for (const w of Object.values(writers)) await w.close();
  return { files, counts, labels, answers };
}

/**
 * Writes one workbook with the sheets returns, line_items and statements. The generator
 * runs once per sheet (it is deterministic), because a streamed workbook writes one sheet
 * after another.
 */
export async function writeXlsxBatch(file: string, opts: GenerateOptions): Promise<WrittenBatch> {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ filename: file, useStyles: false, useSharedStrings: false });
  const counts = { returns: 0, lineItems: 0, statements: 0 };
  const labels: PlantLabel[] = [];
  const answers: ReturnAnswer[] = [];
  for (const table of ['returns', 'line_items', 'statements'] as const) {
    const ws = wb.addWorksheet(table);
    const cols = columnsOf(table);
    ws.addRow(cols).commit();
    for (const g of generateReturns(opts)) {
      if (table === 'returns') {
        ws.addRow(cols.map((c) => g.ret[c as keyof typeof g.ret])).commit();
        counts.returns++;
        if (g.label) labels.push(g.label);
        answers.push(g.answer);
      } else if (table === 'line_items') {
        // Amounts as numbers, as a spreadsheet holds them.
        for (const l of g.lines) ws.addRow([l.return_ref, l.line_code, Number(l.amount)]).commit();
        counts.lineItems += g.lines.length;
      } else {
        for (const s of g.statements) ws.addRow([s.tin, Number(s.tax_year), s.kind, s.payer, Number(s.amount)]).commit();
        counts.statements += g.statements.length;
      }
    }
    ws.commit();
  }
  await wb.commit();
  return { files: { returns: file, line_items: file, statements: file }, counts, labels, answers };
}

/**
 * Writes the answer file, apart from the batch: every return with its planted kinds (none
 * for a typical return; PLANT_KINDS explains each) and its habits (HABIT_KINDS). JSON for
 * programs (the ranking benchmark), CSV beside it for people. `labels` in the JSON keeps
 * the planted returns alone, as before.
 */
export function writeAnswers(dir: string, opts: GenerateOptions, answers: readonly ReturnAnswer[]): { json: string; csv: string } {
  fs.mkdirSync(dir, { recursive: true });
  const json = path.join(dir, 'answers.json');
  const csv = path.join(dir, 'answers.csv');
  const labels = answers.filter((a) => a.kinds.length > 0);
  const habitCounts = Object.fromEntries(
    Object.keys(HABIT_KINDS).map((h) => [h, answers.filter((a) => a.habits.includes(h as keyof typeof HABIT_KINDS)).length]),
  );
  fs.writeFileSync(
    json,
    JSON.stringify(
      {
        scenario: 'Revenue Office of Aldermere (fictional); all names and figures invented',
        options: { ...opts, plantShare: opts.plantShare ?? 0.05, habits: opts.habits ?? 'off' },
        plantKinds: PLANT_KINDS,
        habitKinds: HABIT_KINDS,
        returnsWithHabit: habitCounts,
        planted: labels.length,
        labels,
        returns: answers,
      },
      null,
      2,
    ),
  );
  const lines = [
    'return_ref,tin,tax_year,preparer_id,planted_kinds,habits,detail,habit_detail',
    ...answers.map((l) =>
      [l.returnRef, l.tin, String(l.taxYear), l.preparerId, l.kinds.join(' '), l.habits.join(' '), l.detail, l.habitDetail].map(csvField).join(','),
    ),
  ];
  fs.writeFileSync(csv, lines.join('\n') + '\n');
  return { json, csv };
}

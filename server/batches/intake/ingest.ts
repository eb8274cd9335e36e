/**
 * The intake of one batch: read every row, validate it with the shared zod schemas,
 * and store the batch in one transaction, or nothing of it.
 *
 * The order is returns → line items → statements. Once the returns are read and clean,
 * the transaction opens, the returns go in by COPY, and every line item that passes is
 * streamed into a second COPY while the file is still being read, so parsing (this
 * process) and storing (PostgreSQL) run at the same time. As soon as any error is found,
 * nothing more is sent; reading goes on to the end to list every error; at the end a
 * batch with errors is rolled back (none of its rows stay) and one without is committed.
 */
import fs from 'node:fs';
import path from 'node:path';
import readline from 'node:readline';
import type { z } from 'zod';
import {
  BATCH_COLUMNS,
  columnsOf,
  lineCodePosition,
  lineItemCentsFast,
  LineItemRowSchema,
  MAX_REPORTED_ERRORS,
  normaliseHeader,
  returnRowSchema,
  statementRowSchema,
  type BatchIssue,
  type BatchTable,
  type IntakeLimits,
  type ReturnRow,
  type TaxYearRange,
} from '../../../shared/returns/batch-rows';
import { LINE_CODE_DEFS, LINE_CODE_INDEX, LINE_CODES, totalsFromSums, type LineSums } from '../../../shared/returns/line-codes';
import { formatCents, MAX_LINES_PER_RETURN } from '../../../shared/returns/money';
import { maskTin } from '../../../shared/access-log';
import { copyText, IntakeTransaction, type CopyWriter, type TotalsRow } from '../batch-store.repository';
import { ensureYearPartitions } from '../../returns/year-partitions.repository';
import type { DataSource } from 'typeorm';
import { SourceError, type RawRow, type TableSource } from './source-types';
import { ensureUploadSpool } from './upload-spool';
import { uuid7Factory } from './uuid7';

/** The errors of a batch: every one counted, the first {@link MAX_REPORTED_ERRORS} kept. */
export class IssueList {
  readonly items: BatchIssue[] = [];
  count = 0;

  add(issue: BatchIssue): void {
    this.count++;
    // A copy made of fresh strings: cell texts may be slices of a whole chunk of the file,
    // which a kept message would otherwise keep in memory.
    if (this.items.length < MAX_REPORTED_ERRORS) this.items.push(JSON.parse(JSON.stringify(issue)) as BatchIssue);
  }

  /** The kept items, with an "and N more" line when some were left out. */
  report(): BatchIssue[] {
    const more = this.count - this.items.length;
    if (more <= 0) return this.items;
    return [
      ...this.items,
      {
        file: '',
        row: null,
        column: null,
        message: `…and ${more.toLocaleString('en-GB')} more errors not listed. Fix the ones above (they are often the same mistake) and upload the batch again to see the rest.`,
      },
    ];
  }
}

/** The batch was ended as stalled while this intake still ran: nothing of it is stored. */
export class IntakeEndedError extends Error {
  constructor(readonly batchId: string) {
    super(`batch ${batchId} was ended as stalled before its check finished`);
  }
}

/** What the intake found and did. */
export interface IntakeResult {
  accepted: boolean;
  errors: IssueList;
  notices: BatchIssue[];
  counts: { returns: number; lineItems: number; statements: number };
  amended: number;
}

/** A return as read, with what the intake adds. */
interface ReturnRec extends ReturnRow {
  row: number;
  id: string;
  amends: string | null;
}

const CODE_COUNT = LINE_CODES.length;

/**
 * A table's fast path, made once its header is read (column names and their cell
 * positions): takes one row's cells and returns false when the row must go through the
 * schema, true when it was handled, or a promise to wait for (COPY back-pressure).
 */
type FastRows = (names: string[], index: number[]) => FastRow;
type FastRow = (cells: string[], row: number) => boolean | Promise<void>;
const SINGLE_MASK = LINE_CODES.reduce((m, c, i) => (LINE_CODE_DEFS[c].repeatable ? m : m | (1 << i)), 0);

/** Options of one intake run. */
export interface IntakeOptions {
  dataSource: DataSource;
  batchId: string;
  limits: IntakeLimits;
  years: TaxYearRange;
  /** Folder for spooling sheets that come before `returns` (default: the upload spool, ./upload-spool.ts). */
  tmpDir?: string;
  /** Told how long each phase took (the ingest benchmark prints them). */
  trace?: (phase: string, ms: number) => void;
  /** Told the rows read so far (all tables, header rows included) after each block of rows. */
  onRows?: (rowsRead: number) => void;
}

/**
 * Runs the intake over an upload's tables.
 * @param sources the tables in the order the upload holds them
 * @param describeMissing builds the message for a missing table (CSV part vs XLSX sheet)
 */
export async function runIntake(
  opts: IntakeOptions,
  sources: AsyncIterable<TableSource>,
  describeMissing: (table: BatchTable) => BatchIssue,
): Promise<IntakeResult> {
  const intake = new Intake(opts);
  try {
    return await intake.run(sources, describeMissing);
  } finally {
    await intake.cleanUp();
  }
}

class Intake {
  private readonly errors = new IssueList();
  private readonly notices: BatchIssue[] = [];
  private readonly returns: ReturnRec[] = [];
  private readonly refIndex = new Map<string, number>();
  /** Refs of return rows that were themselves in error: their lines are not reported again. */
  private readonly refsInError = new Set<string>();
  private returnsRead = false;
  private returnsLabel = 'returns';
  private returnsUsable = false;
  /** The line items were read to the end under a usable header (so "no lines" means none). */
  private lineItemsRead = false;
  private tx: IntakeTransaction | null = null;
  private sums: Float64Array = new Float64Array(0);
  private present: Uint16Array = new Uint16Array(0);
  private lineCounts: Uint16Array = new Uint16Array(0);
  private lineItemCount = 0;
  private statementCount = 0;
  private amended = 0;
  private readonly spools: string[] = [];
  private readonly newId = uuid7Factory();

  constructor(private readonly opts: IntakeOptions) {}

  /** Still worth sending rows to PostgreSQL: the transaction is open and no error so far. */
  private get storing(): boolean {
    return this.tx !== null && this.errors.count === 0;
  }

  async run(sources: AsyncIterable<TableSource>, describeMissing: (table: BatchTable) => BatchIssue): Promise<IntakeResult> {
    const seen = new Set<BatchTable>();
    const deferred: TableSource[] = [];
    try {
      try {
        for await (const src of sources) {
          if (seen.has(src.table)) {
            this.errors.add({
              file: src.label,
              row: null,
              column: null,
              message: `A second ${src.table} table was found; a batch has exactly one. Remove or rename the extra one.`,
            });
            continue;
          }
          seen.add(src.table);
          if (src.table !== 'returns' && !this.returnsRead) {
            // A workbook may store line_items before returns: keep those rows on disk and read them once the returns are known.
            deferred.push(await this.spool(src));
            continue;
          }
          await this.readTable(src);
        }
      } catch (e) {
        if (!(e instanceof SourceError) || !e.fatal) throw e;
        this.errors.add(e.issue);
      }
      for (const t of ['returns', 'line_items'] as const) if (!seen.has(t)) this.errors.add(describeMissing(t));
      if (!this.returnsRead) await this.afterReturns();
      for (const src of deferred) await this.readTable(src);
      if (this.returnsUsable && this.lineItemsRead) this.checkEveryReturnHasLines();

      if (this.errors.count > 0 || !this.tx) {
        await this.tx?.rollback();
        this.tx = null;
        return this.result(false);
      }
      const t0 = performance.now();
      await this.tx.writeTotals(this.totalsRows());
      this.opts.trace?.('totals', performance.now() - t0);
      const t1 = performance.now();
      const finished = await this.tx.finishBatch(this.opts.batchId, {
        returns: this.returns.length,
        lineItems: this.lineItemCount,
        statements: this.statementCount,
        amended: this.amended,
        notices: this.notices,
      });
      if (!finished) throw new IntakeEndedError(this.opts.batchId);
      await this.tx.commit();
      this.opts.trace?.('finish and commit', performance.now() - t1);
      this.tx = null;
      return this.result(true);
    } catch (e) {
      await this.tx?.rollback();
      this.tx = null;
      throw e;
    }
  }

  private result(accepted: boolean): IntakeResult {
    return {
      accepted,
      errors: this.errors,
      notices: this.notices,
      counts: { returns: this.returns.length, lineItems: this.lineItemCount, statements: this.statementCount },
      amended: this.amended,
    };
  }

  async cleanUp(): Promise<void> {
    for (const dir of this.spools) await fs.promises.rm(dir, { recursive: true, force: true });
  }

  // -------------------------------------------------------------------------------------
  // Reading one table

  private rowsRead = 0;

  /** Passes the blocks of rows on and tells {@link IntakeOptions.onRows} how far reading has got. */
  private async *counted(rows: AsyncIterable<RawRow[]>): AsyncIterable<RawRow[]> {
    for await (const block of rows) {
      yield block;
      this.rowsRead += block.length;
      this.opts.onRows?.(this.rowsRead);
    }
  }

  private async readTable(src: TableSource): Promise<void> {
    const t0 = performance.now();
    if (this.opts.onRows) src = { ...src, rows: this.counted(src.rows) };
    try {
      if (src.table === 'returns') await this.readReturns(src);
      else if (src.table === 'line_items') await this.readLineItems(src);
      else await this.readStatements(src);
    } catch (e) {
      if (!(e instanceof SourceError)) throw e;
      this.errors.add(e.issue);
      if (e.fatal) throw e;
    } finally {
      this.opts.trace?.(`read ${src.table}`, performance.now() - t0);
      if (src.table === 'returns' && !this.returnsRead) {
        const t1 = performance.now();
        await this.afterReturns();
        this.opts.trace?.('store returns (taxpayers, preparers, COPY)', performance.now() - t1);
      }
    }
  }

  /**
   * Reads a table's header and rows, validates each data row with `schema` and hands the
   * parsed row on. Blank rows are skipped; errors are collected with file, row and column.
   * @returns false when the header was unusable (the rows were not checked)
   */
  private async eachRow<T>(
    src: TableSource,
    schema: z.ZodType<T, Record<string, string>>,
    onRow: (value: T, row: number, raw: Record<string, string>) => void | Promise<void> | undefined,
    onInvalid?: (raw: Record<string, string>) => void,
    fast?: FastRows,
  ): Promise<boolean> {
    const table = src.table;
    const known = columnsOf(table);
    let header: { names: string[]; index: number[]; width: number; absent: string[] } | null = null;
    let headerOk = true;
    let dataRows = 0;
    const values: Record<string, string> = {};
    let fastRow: FastRow | null = null;
    for await (const batch of src.rows)
      for (const r of batch) {
        if (isBlank(r)) continue;
        if (!header) {
          const h = this.readHeader(src, r, known);
          header = { ...h, absent: known.filter((k) => !h.names.includes(k)) };
          for (const k of header.absent) values[k] = '';
          headerOk = h.names.length > 0;
          if (headerOk && fast) fastRow = fast(h.names, h.index);
          continue;
        }
        dataRows++;
        if (dataRows > this.opts.limits.maxRows) {
          this.errors.add({
            file: src.label,
            row: r.row,
            column: null,
            message: `The ${table} table has more than ${this.opts.limits.maxRows.toLocaleString('en-GB')} rows, the most one batch file may hold. Split it into several batches.`,
          });
          return false; // not read to the end: nothing more can be said about it
        }
        if (!headerOk) continue;
        // The fast path takes the rows it is sure of (no cell problems, no extra cells) and
        // gives back the rest, which the schema judges and reports as before.
        if (fastRow !== null && r.problems === null && r.cells.length <= header.width) {
          const took = fastRow(r.cells, r.row);
          if (took !== false) {
            if (took !== true) await took;
            continue;
          }
        }
        // One object per table, refilled for each row: a million rows need no million objects.
        const { names, index } = header;
        for (let i = 0; i < names.length; i++) values[names[i]] = r.cells[index[i]] ?? '';
        let skip: Set<string> | null = null;
        if (r.problems) {
          for (let i = 0; i < names.length; i++) {
            const p = r.problems[index[i]];
            if (p) {
              this.errors.add({ file: src.label, row: r.row, column: names[i], message: `The cell ${p}`, value: null });
              (skip ??= new Set()).add(names[i]);
            }
          }
        }
        if (r.cells.length > header.width) {
          const extra = r.cells.slice(header.width).filter((c) => c !== '');
          if (extra.length)
            this.errors.add({
              file: src.label,
              row: r.row,
              column: null,
              message: `The row has ${r.cells.length} values but the header has ${header.width} columns; remove the extra values or add their column names.`,
              value: shorten(extra[0]),
            });
        }
        const parsed = schema.safeParse(values);
        if (parsed.success) {
          if (!skip) {
            // Handlers return a promise only when they must wait (COPY back-pressure).
            const wait = onRow(parsed.data, r.row, values);
            if (wait) await wait;
          } else onInvalid?.(values);
          continue;
        }
        onInvalid?.(values);
        for (const issue of parsed.error.issues) {
          const column = typeof issue.path[0] === 'string' ? issue.path[0] : null;
          if (column && skip?.has(column)) continue;
          this.errors.add({
            file: src.label,
            row: r.row,
            column,
            message: `${columnTitle(column)} ${issue.message}`,
            value: column ? shorten(values[column]) : null,
          });
        }
      }
    if (!header) {
      this.errors.add({
        file: src.label,
        row: null,
        column: null,
        message: `The ${table} ${src.label.includes('›') ? 'sheet' : 'file'} is empty: it needs a header row (${BATCH_COLUMNS[table].required.join(', ')}) and then one row per ${rowNoun(table)}.`,
      });
      return false;
    }
    if (dataRows === 0 && table !== 'statements') {
      this.errors.add({
        file: src.label,
        row: null,
        column: null,
        message: `The ${table} table has a header but no rows; it needs one row per ${rowNoun(table)}.`,
      });
    }
    return headerOk;
  }

  private readHeader(src: TableSource, r: RawRow, known: readonly string[]): { names: string[]; index: number[]; width: number } {
    const names: string[] = [];
    const index: number[] = [];
    const seen = new Map<string, number>();
    let ok = true;
    r.cells.forEach((cell, i) => {
      const name = normaliseHeader(cell);
      if (name === '') return;
      if (!known.includes(name)) {
        ok = false;
        this.errors.add({
          file: src.label,
          row: r.row,
          column: cell,
          message: `Unknown column "${shorten(cell)}". The ${src.table} table has the columns ${known.join(', ')}; rename or remove this one.`,
          value: shorten(cell),
        });
        return;
      }
      if (seen.has(name)) {
        ok = false;
        this.errors.add({
          file: src.label,
          row: r.row,
          column: name,
          message: `The column ${name} appears twice (columns ${seen.get(name)! + 1} and ${i + 1}); keep one.`,
        });
        return;
      }
      seen.set(name, i);
      names.push(name);
      index.push(i);
    });
    const missing = BATCH_COLUMNS[src.table].required.filter((c) => !seen.has(c));
    if (missing.length) {
      ok = false;
      this.errors.add({
        file: src.label,
        row: r.row,
        column: null,
        message: `The header row lacks the column${missing.length > 1 ? 's' : ''} ${missing.join(', ')}. The first row must name the columns: ${BATCH_COLUMNS[src.table].required.join(', ')}${BATCH_COLUMNS[src.table].optional.length ? ` (optional: ${BATCH_COLUMNS[src.table].optional.join(', ')})` : ''}.`,
      });
    }
    // Rows are read only under a complete, unambiguous header: guessing would report noise.
    return ok ? { names, index, width: r.cells.length } : { names: [], index: [], width: r.cells.length };
  }

  // -------------------------------------------------------------------------------------
  // returns

  private async readReturns(src: TableSource): Promise<void> {
    this.returnsLabel = src.label;
    const tinYear = new Map<string, number>(); // "tin:year" → index
    const headerOk = await this.eachRow(
      src,
      returnRowSchema(this.opts.years),
      (r, row) => {
        const dupe = this.refIndex.get(r.returnRef);
        if (dupe !== undefined) {
          this.errors.add({
            file: src.label,
            row,
            column: 'return_ref',
            message: `return_ref ${r.returnRef} is used again (first on row ${this.returns[dupe].row}); every return in a batch needs its own reference.`,
            value: r.returnRef,
          });
          return;
        }
        const key = `${r.tin}:${r.taxYear}`;
        const other = tinYear.get(key);
        if (other !== undefined) {
          const o = this.returns[other];
          this.errors.add({
            file: src.label,
            row,
            column: 'tin',
            message: `This batch already has a ${r.taxYear} return for TIN ${maskTin(r.tin)} (row ${o.row}, return_ref ${o.returnRef}). Send one return per taxpayer and tax year; an amended return goes in a later batch.`,
          });
          this.refsInError.add(r.returnRef);
          return;
        }
        tinYear.set(key, this.returns.length);
        this.refIndex.set(r.returnRef, this.returns.length);
        this.returns.push({ ...r, row, id: '', amends: null });
      },
      (raw) => {
        if (raw.return_ref) this.refsInError.add(raw.return_ref);
      },
    );
    this.returnsUsable = headerOk;
  }

  /** Once the returns are read: open the transaction and store them, if nothing is wrong so far. */
  private async afterReturns(): Promise<void> {
    this.returnsRead = true;
    const n = this.returns.length;
    this.sums = new Float64Array(n * CODE_COUNT);
    this.present = new Uint16Array(n);
    this.lineCounts = new Uint16Array(n);
    if (this.errors.count > 0 || n === 0) return;

    // Each year's partitions before the batch's transaction (docs/design.md#partitions-by-tax-year):
    // made in a short transaction of their own, so their lock is not held while the batch loads.
    await ensureYearPartitions(
      this.opts.dataSource,
      this.returns.map((r) => r.taxYear),
    );
    this.tx = await IntakeTransaction.begin(this.opts.dataSource);
    const tx = this.tx;
    if (await this.refuseRefsOfOthers(tx)) {
      // Nothing will be stored: give the intake lock back at once rather than after the line items.
      await tx.rollback();
      this.tx = null;
      return;
    }
    const on = await tx.findCurrentReturns(
      this.returns.map((r) => r.tin),
      this.returns.map((r) => r.taxYear),
    );
    const onFile = new Map(on.map((c) => [`${c.tin}:${c.taxYear}`, c]));
    for (const r of this.returns) {
      r.id = this.newId();
      const prior = onFile.get(`${r.tin}:${r.taxYear}`);
      if (prior) {
        r.amends = prior.id;
        this.amended++;
        this.notices.push({
          file: this.returnsLabel,
          row: r.row,
          column: 'tin',
          message: `Amended return: TIN ${maskTin(r.tin)} already has a ${r.taxYear} return on file (return_ref ${prior.returnRef}). This one (${r.returnRef}) is stored as its amendment and replaces it for scoring; the earlier one is kept.`,
        });
      }
    }
    // The taxpayer as described by their latest tax year in this batch.
    const latest = new Map<string, ReturnRec>();
    for (const r of this.returns) {
      const cur = latest.get(r.tin);
      if (!cur || r.taxYear > cur.taxYear) latest.set(r.tin, r);
    }
    const taxpayerIds = await tx.upsertTaxpayers(
      [...latest.values()].map((r) => ({ tin: r.tin, name: r.taxpayerName, activityCode: r.activityCode, email: r.email, postalAddress: r.postalAddress })),
    );
    const preparerIds = await tx.upsertPreparers([...new Set(this.returns.flatMap((r) => (r.preparerId ? [r.preparerId] : [])))]);
    await tx.supersede(on.map((c) => c.id));
    const w = tx.openReturnCopy();
    const batchId = this.opts.batchId;
    for (const r of this.returns) {
      const line = `${r.id}\t${batchId}\t${taxpayerIds.get(r.tin)}\t${r.preparerId ? preparerIds.get(r.preparerId) : '\\N'}\t${copyText(r.returnRef)}\t${r.taxYear}\t${r.row}\t${r.amends ?? '\\N'}\t${r.filedOn ?? '\\N'}\n`;
      if (w.add(line)) await w.flush();
    }
    await w.end();
  }

  /**
   * A return reference names one return in the office (issue 14): a reference already on file
   * for another taxpayer, or for another tax year of the same taxpayer, is an error on its row
   * and column. The same reference for the same taxpayer and year is an amendment (below).
   * References compare without regard to case, as the queue's search does.
   * @returns true when any was refused
   */
  private async refuseRefsOfOthers(tx: IntakeTransaction): Promise<boolean> {
    const onFile = await tx.findReturnsByRef(this.returns.map((r) => r.returnRef.toUpperCase()));
    if (!onFile.length) return false;
    const byRef = new Map<string, typeof onFile>();
    for (const o of onFile) byRef.set(o.refKey, [...(byRef.get(o.refKey) ?? []), o]);
    let refused = false;
    for (const r of this.returns) {
      const found = byRef.get(r.returnRef.toUpperCase());
      if (!found) continue;
      const other = found.find((o) => o.tin !== r.tin) ?? found.find((o) => o.taxYear !== r.taxYear);
      if (!other) continue;
      refused = true;
      const where = `batch ${other.batchNo}, row ${other.sourceRow}`;
      this.errors.add({
        file: this.returnsLabel,
        row: r.row,
        column: 'return_ref',
        value: r.returnRef,
        message:
          other.tin !== r.tin
            ? `return_ref ${r.returnRef} is already on file for another taxpayer (a ${other.taxYear} return, ${where}). A reference names one return in the office: give this return its own reference, or correct the TIN if it is the same taxpayer.`
            : `return_ref ${r.returnRef} is already on file for this taxpayer's ${other.taxYear} return (${where}). Only an amendment of the same tax year keeps its reference: give this ${r.taxYear} return its own reference.`,
      });
    }
    return refused;
  }

  // -------------------------------------------------------------------------------------
  // line_items

  private async readLineItems(src: TableSource): Promise<void> {
    let copy: CopyWriter | null = this.storing ? this.tx!.openLineItemCopy() : null;
    const sums = this.sums;
    const present = this.present;
    const counts = this.lineCounts;
    const returns = this.returns;
    const refIndex = this.refIndex;
    const checkRefs = this.returnsUsable;
    const errors = this.errors;
    // COPY text pieces made once: "<return id>\t<tax year>\t" per return, "\t<code>\t" per code.
    const idTab = copy ? returns.map((r) => `${r.id}\t${r.taxYear}\t`) : [];
    const codeTab = LINE_CODES.map((c) => `\t${c}\t`);
    /** One line item that passed the schema (or its exact fast path). */
    const onLine = (returnRef: string, code: number, cents: number, row: number): Promise<void> | undefined => {
      const idx = refIndex.get(returnRef);
      if (idx === undefined) {
        if (checkRefs && !this.refsInError.has(returnRef)) {
          errors.add({
            file: src.label,
            row,
            column: 'return_ref',
            message: `return_ref ${returnRef} has no row in returns; every line item must belong to a return of this batch.`,
            value: returnRef,
          });
        }
        return;
      }
      const bit = 1 << code;
      if (SINGLE_MASK & bit & present[idx]) {
        errors.add({
          file: src.label,
          row,
          column: 'line_code',
          message: `${LINE_CODES[code]} appears more than once for return ${returnRef}; a total or refund is a single line (only itemised codes may repeat).`,
          value: LINE_CODES[code],
        });
        return;
      }
      const lineNo = ++counts[idx];
      if (lineNo > MAX_LINES_PER_RETURN) {
        if (lineNo === MAX_LINES_PER_RETURN + 1)
          errors.add({
            file: src.label,
            row,
            column: 'return_ref',
            message: `Return ${returnRef} has more than ${MAX_LINES_PER_RETURN} line items; combine small entries of the same code.`,
            value: returnRef,
          });
        return;
      }
      present[idx] |= bit;
      sums[idx * CODE_COUNT + code] += cents;
      this.lineItemCount++;
      if (copy) {
        if (errors.count > 0) {
          // Something is wrong: the batch will be rolled back, so stop sending rows.
          const ending = copy.end();
          copy = null;
          return ending;
        }
        if (copy.add(idTab[idx] + lineNo + codeTab[code] + formatCents(cents) + '\n')) return copy.flush();
      }
    };
    /** Rows the exact fast path of LineItemRowSchema accepts skip zod; the rest go through it. */
    const fast: FastRows = (names, index) => {
      const refAt = index[names.indexOf('return_ref')];
      const codeAt = index[names.indexOf('line_code')];
      const amountAt = index[names.indexOf('amount')];
      return (cells, row) => {
        const returnRef = cells[refAt] ?? '';
        const code = lineCodePosition(cells[codeAt] ?? '');
        const cents = lineItemCentsFast(returnRef, code, cells[amountAt] ?? '');
        if (cents !== cents) return false; // NaN: in doubt, the schema decides and words the errors
        return onLine(returnRef, code, cents, row) ?? true;
      };
    };
    try {
      const headerOk = await this.eachRow(
        src,
        LineItemRowSchema,
        (li, row) => onLine(li.returnRef, LINE_CODE_INDEX[li.lineCode], li.cents, row),
        undefined,
        fast,
      );
      this.lineItemsRead = headerOk;
    } finally {
      if (copy) {
        await copy.end();
        this.opts.trace?.('(line items: waiting for PostgreSQL to take rows)', copy.waitedMs);
      }
    }
  }

  private checkEveryReturnHasLines(): void {
    for (let i = 0; i < this.returns.length; i++) {
      if (this.lineCounts[i] === 0) {
        const r = this.returns[i];
        this.errors.add({
          file: this.returnsLabel,
          row: r.row,
          column: 'return_ref',
          message: `Return ${r.returnRef} has no line items; add its lines (at least tot.income) to line_items, or remove the return.`,
          value: r.returnRef,
        });
      }
    }
  }

  private totalsRows(): TotalsRow[] {
    const out: TotalsRow[] = [];
    for (let i = 0; i < this.returns.length; i++) {
      const sums = {} as LineSums;
      for (let c = 0; c < CODE_COUNT; c++) sums[LINE_CODES[c]] = this.sums[i * CODE_COUNT + c];
      const mask = this.present[i];
      const t = totalsFromSums(sums, (code) => (mask & (1 << LINE_CODE_INDEX[code])) !== 0);
      const opt = (v: number | null) => (v === null ? null : formatCents(v));
      out.push({
        id: this.returns[i].id,
        lineCount: this.lineCounts[i],
        reportedIncome: opt(t.reported.income),
        reportedDeductions: opt(t.reported.deductions),
        reportedRefund: opt(t.reported.refund),
        wages: formatCents(t.wages),
        interest: formatCents(t.interest),
        receipts: formatCents(t.receipts),
        businessExpenses: formatCents(t.businessExpenses),
        income: formatCents(t.income),
        deductions: formatCents(t.deductions),
        taxable: formatCents(t.taxable),
        tax: formatCents(t.tax),
        withheld: formatCents(t.withheld),
        refund: formatCents(t.refund),
      });
    }
    return out;
  }

  // -------------------------------------------------------------------------------------
  // statements

  private async readStatements(src: TableSource): Promise<void> {
    let copy: CopyWriter | null = this.storing ? this.tx!.openStatementCopy() : null;
    const batchId = this.opts.batchId;
    try {
      await this.eachRow(src, statementRowSchema(this.opts.years), (s, row) => {
        this.statementCount++;
        if (!copy) return;
        if (this.errors.count > 0) {
          const ending = copy.end();
          copy = null;
          return ending;
        }
        if (copy.add(`${batchId}\t${s.tin}\t${s.taxYear}\t${s.kind}\t${copyText(s.payer)}\t${formatCents(s.cents)}\t${row}\n`)) return copy.flush();
      });
    } finally {
      if (copy) await copy.end();
    }
  }

  // -------------------------------------------------------------------------------------
  // Sheets stored before `returns`

  private async spool(src: TableSource): Promise<TableSource> {
    const dir = await fs.promises.mkdtemp(path.join(this.opts.tmpDir ?? ensureUploadSpool(), `${process.pid}-sheet-`));
    const file = path.join(dir, `${src.table}.ndjson`);
    this.spools.push(dir);
    const out = fs.createWriteStream(file, { mode: 0o600 });
    try {
      for await (const batch of src.rows) {
        const text = batch.map((r) => JSON.stringify([r.row, r.cells, r.problems])).join('\n') + '\n';
        if (!out.write(text)) await new Promise((res) => out.once('drain', res));
      }
    } finally {
      await new Promise<void>((res, rej) => out.end((e?: Error | null) => (e ? rej(e) : res())));
    }
    return { table: src.table, label: src.label, rows: replay(file) };
  }
}

async function* replay(file: string): AsyncGenerator<RawRow[]> {
  const rl = readline.createInterface({ input: fs.createReadStream(file), crlfDelay: Infinity });
  let batch: RawRow[] = [];
  for await (const line of rl) {
    const [row, cells, problems] = JSON.parse(line) as [number, string[], (string | undefined)[] | null];
    batch.push({ row, cells, problems });
    if (batch.length >= 4096) {
      yield batch;
      batch = [];
    }
  }
  if (batch.length) yield batch;
}

function isBlank(r: RawRow): boolean {
  if (r.problems) return false;
  for (const c of r.cells) if (c !== '') return false;
  return true;
}

function shorten(v: string | undefined): string | null {
  if (v === undefined) return null;
  return v.length > 60 ? `${v.slice(0, 60)}…` : v;
}

function columnTitle(column: string | null): string {
  return column ? `${column}` : 'The row';
}

function rowNoun(table: BatchTable): string {
  return table === 'returns' ? 'return' : table === 'line_items' ? 'line item' : 'statement';
}

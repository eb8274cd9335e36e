/**
 * Storing an accepted batch: one transaction on one pg connection, with COPY for the bulk
 * rows (no per-row round trips); either all of a batch commits or none of it does.
 */
import { finished } from 'node:stream/promises';
import type { PoolClient } from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import type { DataSource, QueryRunner } from 'typeorm';
import type { BatchIssue } from '../../shared/returns/batch-rows';
import type { ActivityCode } from '../../shared/returns/line-codes';

/** COPY text format: backslash, tab, newline and carriage return escaped; null as \N. */
export function copyText(s: string | null): string {
  if (s === null) return '\\N';
  return /[\\\t\n\r]/.test(s) ? s.replace(/[\\\t\n\r]/g, (c) => (c === '\\' ? '\\\\' : c === '\t' ? '\\t' : c === '\n' ? '\\n' : '\\r')) : s;
}

/**
 * Writes rows into one COPY … FROM STDIN, in chunks of about 256 kB, waiting when
 * PostgreSQL is behind (back-pressure) so memory stays flat however large the batch.
 */
export class CopyWriter {
  private readonly stream: ReturnType<typeof copyFrom>;
  private readonly done: Promise<void>;
  private buf = '';
  private failure: Error | null = null;
  /** Time spent waiting for PostgreSQL to take more (back-pressure), in ms. */
  waitedMs = 0;

  constructor(client: PoolClient, sql: string) {
    this.stream = client.query(copyFrom(sql));
    this.stream.on('error', (e: Error) => (this.failure ??= e));
    this.done = finished(this.stream);
    this.done.catch(() => undefined); // reported by end()
  }

  /** Adds one line (ending in \n). @returns true when the caller should `await flush()`. */
  add(line: string): boolean {
    this.buf += line;
    return this.buf.length >= 262_144;
  }

  /** Sends what is buffered; resolves once PostgreSQL can take more. */
  async flush(): Promise<void> {
    if (this.failure) throw this.failure;
    if (!this.buf) return;
    const ok = this.stream.write(this.buf);
    this.buf = '';
    if (!ok) {
      const t0 = performance.now();
      await new Promise<void>((resolve, reject) => {
        const onDrain = () => {
          this.stream.off('error', onError);
          resolve();
        };
        const onError = (e: Error) => {
          this.stream.off('drain', onDrain);
          reject(e);
        };
        this.stream.once('drain', onDrain);
        this.stream.once('error', onError);
      });
      this.waitedMs += performance.now() - t0;
    }
  }

  /** Finishes the COPY and waits for PostgreSQL to confirm it. */
  async end(): Promise<void> {
    await this.flush();
    this.stream.end();
    const t0 = performance.now();
    await this.done;
    this.waitedMs += performance.now() - t0;
    if (this.failure) throw this.failure;
  }
}

/** A taxpayer as this batch last describes them. */
export interface TaxpayerUpsert {
  tin: string;
  name: string;
  activityCode: ActivityCode;
  email: string | null;
  postalAddress: string | null;
}

/** A return already on file that a return of this batch amends. */
export interface CurrentReturn {
  id: string;
  tin: string;
  taxYear: number;
  returnRef: string;
  batchId: string;
}

/** A return on file found by its reference. */
export interface RefOnFile {
  refKey: string;
  tin: string;
  taxYear: number;
  batchNo: number;
  sourceRow: number;
}

/** Per-return totals computed at intake, in canonical decimal text. */
export interface TotalsRow {
  id: string;
  lineCount: number;
  reportedIncome: string | null;
  reportedDeductions: string | null;
  reportedRefund: string | null;
  wages: string;
  interest: string;
  receipts: string;
  businessExpenses: string;
  income: string;
  deductions: string;
  taxable: string;
  tax: string;
  withheld: string;
  refund: string;
}

/**
 * The intake transaction: everything of one accepted batch is written through this, and
 * either all of it commits or none of it does.
 */
export class IntakeTransaction {
  private constructor(
    private readonly runner: QueryRunner,
    readonly client: PoolClient,
  ) {}

  /**
   * Opens a connection and a transaction, then takes the intake lock: batches are stored
   * one at a time, so two batches amending the same return cannot race.
   */
  static async begin(ds: DataSource): Promise<IntakeTransaction> {
    const runner = ds.createQueryRunner();
    const client = (await runner.connect()) as PoolClient;
    const tx = new IntakeTransaction(runner, client);
    try {
      await client.query('BEGIN');
      await client.query(`SELECT pg_advisory_xact_lock(hashtext('plumbline.intake'))`);
    } catch (e) {
      await tx.rollback();
      throw e;
    }
    return tx;
  }

  /** Current (not superseded) returns on file for these TIN/year pairs. */
  async findCurrentReturns(tins: string[], years: number[]): Promise<CurrentReturn[]> {
    const r = await this.client.query(
      `SELECT r.id, t.tin, r.tax_year AS "taxYear", r.return_ref AS "returnRef", r.batch_id AS "batchId"
       FROM unnest($1::text[], $2::int[]) AS k(tin, year)
       JOIN taxpayer t ON t.tin = k.tin
       JOIN tax_return r ON r.taxpayer_id = t.id AND r.tax_year = k.year AND NOT r.superseded`,
      [tins, years],
    );
    return r.rows;
  }

  /**
   * Returns on file (current or superseded) whose reference is one of `refKeys` (upper case),
   * with their taxpayer's TIN and where they came from. Uses idx_tax_return_ref_upper.
   */
  async findReturnsByRef(refKeys: string[]): Promise<RefOnFile[]> {
    if (!refKeys.length) return [];
    const r = await this.client.query(
      `SELECT upper(r.return_ref) AS "refKey", t.tin, r.tax_year AS "taxYear", b.batch_no AS "batchNo", r.source_row AS "sourceRow"
         FROM tax_return r JOIN taxpayer t ON t.id = r.taxpayer_id JOIN filing_batch b ON b.id = r.batch_id
        WHERE upper(r.return_ref) = ANY($1::text[])`,
      [refKeys],
    );
    return r.rows.map((x: RefOnFile) => ({ ...x, tin: String(x.tin) }));
  }

  /**
   * Creates or updates taxpayers (name and activity as last filed; contact details only
   * when given) and returns their ids by TIN.
   */
  async upsertTaxpayers(rows: TaxpayerUpsert[]): Promise<Map<string, string>> {
    const ids = new Map<string, string>();
    for (let i = 0; i < rows.length; i += 20_000) {
      const part = rows.slice(i, i + 20_000);
      const r = await this.client.query(
        `INSERT INTO taxpayer (tin, name, activity_code, email, postal_address)
         SELECT * FROM unnest($1::text[], $2::text[], $3::text[], $4::text[], $5::text[])
         ON CONFLICT (tin) DO UPDATE SET
           name = EXCLUDED.name,
           activity_code = EXCLUDED.activity_code,
           email = COALESCE(EXCLUDED.email, taxpayer.email),
           postal_address = COALESCE(EXCLUDED.postal_address, taxpayer.postal_address),
           updated_at = now()
         RETURNING id, tin`,
        [part.map((p) => p.tin), part.map((p) => p.name), part.map((p) => p.activityCode), part.map((p) => p.email), part.map((p) => p.postalAddress)],
      );
      for (const row of r.rows) ids.set(row.tin, row.id);
    }
    return ids;
  }

  /** Creates missing preparers and returns every id by code. */
  async upsertPreparers(codes: string[]): Promise<Map<string, string>> {
    const ids = new Map<string, string>();
    if (!codes.length) return ids;
    await this.client.query(`INSERT INTO preparer (code) SELECT unnest($1::text[]) ON CONFLICT (code) DO NOTHING`, [codes]);
    const r = await this.client.query(`SELECT id, code FROM preparer WHERE code = ANY($1::text[])`, [codes]);
    for (const row of r.rows) ids.set(row.code, row.id);
    return ids;
  }

  /** Marks returns as replaced by amended ones (before the new ones go in: one current return per TIN and year). */
  async supersede(ids: string[]): Promise<void> {
    if (ids.length) await this.client.query(`UPDATE tax_return SET superseded = true WHERE id = ANY($1::uuid[])`, [ids]);
  }

  /** COPY into tax_return: id, batch, taxpayer, preparer, ref, year, source row, amended return, filing date. */
  openReturnCopy(): CopyWriter {
    return new CopyWriter(
      this.client,
      `COPY tax_return (id, batch_id, taxpayer_id, preparer_id, return_ref, tax_year, source_row, amends_return_id, filed_on) FROM STDIN`,
    );
  }

  /**
   * COPY into line_item: return id, the return's tax year (the partition key:
   * docs/design.md#partitions-by-tax-year), line number, code, amount.
   */
  openLineItemCopy(): CopyWriter {
    return new CopyWriter(this.client, `COPY line_item (return_id, tax_year, line_no, line_code, amount) FROM STDIN`);
  }

  /** COPY into third_party_statement. */
  openStatementCopy(): CopyWriter {
    return new CopyWriter(this.client, `COPY third_party_statement (batch_id, tin, tax_year, kind, payer, amount, source_row) FROM STDIN`);
  }

  /** Writes the per-return totals: COPY into a temporary table, then one UPDATE … FROM. */
  async writeTotals(rows: TotalsRow[]): Promise<void> {
    await this.client.query(`
      CREATE TEMP TABLE intake_totals (
        id uuid PRIMARY KEY, line_count integer,
        reported_income numeric, reported_deductions numeric, reported_refund numeric,
        wages numeric, interest numeric, receipts numeric, business_expenses numeric,
        income numeric, deductions numeric, taxable numeric, tax numeric, withheld numeric, refund numeric
      ) ON COMMIT DROP`);
    const w = new CopyWriter(this.client, `COPY intake_totals FROM STDIN`);
    for (const t of rows) {
      const line = `${t.id}\t${t.lineCount}\t${t.reportedIncome ?? '\\N'}\t${t.reportedDeductions ?? '\\N'}\t${t.reportedRefund ?? '\\N'}\t${t.wages}\t${t.interest}\t${t.receipts}\t${t.businessExpenses}\t${t.income}\t${t.deductions}\t${t.taxable}\t${t.tax}\t${t.withheld}\t${t.refund}\n`;
      if (w.add(line)) await w.flush();
    }
    await w.end();
    await this.client.query(`
      UPDATE tax_return r SET
        line_count = t.line_count,
        reported_income = t.reported_income, reported_deductions = t.reported_deductions, reported_refund = t.reported_refund,
        total_wages = t.wages, total_interest = t.interest, total_receipts = t.receipts,
        total_business_expenses = t.business_expenses, computed_income = t.income,
        computed_deductions = t.deductions, taxable_income = t.taxable, computed_tax = t.tax,
        tax_withheld = t.withheld, computed_refund = t.refund
      FROM intake_totals t WHERE r.id = t.id`);
  }

  /**
   * Moves the batch to `queued` with its counts and notices.
   * @returns false when the batch is no longer being checked (a clerk ended it as stalled
   *   meanwhile): the caller must roll back
   */
  async finishBatch(id: string, f: { returns: number; lineItems: number; statements: number; amended: number; notices: BatchIssue[] }): Promise<boolean> {
    const r = await this.client.query(
      `UPDATE filing_batch SET state = 'queued', return_count = $2, line_item_count = $3, statement_count = $4,
         amended_count = $5, notices = $6::jsonb, errors = '[]', error_count = 0, updated_at = now()
       WHERE id = $1 AND state IN ('received', 'validating')`,
      [id, f.returns, f.lineItems, f.statements, f.amended, JSON.stringify(f.notices)],
    );
    return (r.rowCount ?? 0) > 0;
  }

  async commit(): Promise<void> {
    try {
      await this.client.query('COMMIT');
    } finally {
      await this.runner.release();
    }
  }

  /** Rolls back (nothing of the batch stays) and releases the connection; never throws. */
  async rollback(): Promise<void> {
    try {
      await this.client.query('ROLLBACK');
    } catch {
      // The connection may be broken; releasing it is all that is left to do.
    } finally {
      await this.runner.release().catch(() => undefined);
    }
  }
}

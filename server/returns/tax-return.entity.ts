import { Column, Entity, Index, JoinColumn, ManyToOne, PrimaryColumn } from 'typeorm';
import { FilingBatch } from '../batches/filing-batch.entity';
import { Preparer } from '../preparers/preparer.entity';
import { Taxpayer } from '../taxpayers/taxpayer.entity';

/**
 * One taxpayer's return for one tax year, as filed in a batch, with its totals.
 *
 * Money columns are PostgreSQL numeric, read as decimal strings ("1234.50"); turn them into
 * cents with `centsFromNumeric` (shared/returns/money.ts), never into floats.
 * `reported*` are what the return's own `tot.*`/`tax.refund` lines say (null when absent);
 * the `total*`/`computed*` columns are Aldermere's rules applied to its lines at intake
 * (shared/returns/line-codes.ts). The id is a UUIDv7 (time-ordered), so the line items of
 * one batch sit together in line_item's primary-key index.
 */
@Entity({ name: 'tax_return' })
@Index('uq_tax_return_batch_ref', ['batchId', 'returnRef'], { unique: true })
export class TaxReturn {
  @PrimaryColumn({ type: 'uuid' })
  id: string;

  @Column({ name: 'batch_id', type: 'uuid' })
  batchId: string;

  @ManyToOne(() => FilingBatch)
  @JoinColumn({ name: 'batch_id' })
  batch?: FilingBatch;

  @Column({ name: 'taxpayer_id', type: 'uuid' })
  taxpayerId: string;

  @ManyToOne(() => Taxpayer)
  @JoinColumn({ name: 'taxpayer_id' })
  taxpayer?: Taxpayer;

  /** null for a self-prepared return. */
  @Column({ name: 'preparer_id', type: 'uuid', nullable: true })
  preparerId: string | null;

  @ManyToOne(() => Preparer, { nullable: true })
  @JoinColumn({ name: 'preparer_id' })
  preparer?: Preparer | null;

  /** The filer's reference, unique within its batch. */
  @Column({ name: 'return_ref', type: 'text' })
  returnRef: string;

  @Column({ name: 'tax_year', type: 'smallint' })
  taxYear: number;

  /** Row of the `returns` file or sheet it came from (header = row 1). */
  @Column({ name: 'source_row', type: 'integer' })
  sourceRow: number;

  /** The return on file for the same TIN and year that this one amends, if any. */
  @Column({ name: 'amends_return_id', type: 'uuid', nullable: true })
  amendsReturnId: string | null;

  /** True once a later amended return replaced this one; scoring reads current returns. */
  @Column({ type: 'boolean', default: false })
  superseded: boolean;

  @Column({ name: 'line_count', type: 'integer', default: 0 })
  lineCount: number;

  @Column({ name: 'reported_income', type: 'numeric', precision: 16, scale: 2, nullable: true })
  reportedIncome: string | null;

  @Column({ name: 'reported_deductions', type: 'numeric', precision: 16, scale: 2, nullable: true })
  reportedDeductions: string | null;

  @Column({ name: 'reported_refund', type: 'numeric', precision: 16, scale: 2, nullable: true })
  reportedRefund: string | null;

  @Column({ name: 'total_wages', type: 'numeric', precision: 16, scale: 2, default: 0 })
  totalWages: string;

  @Column({ name: 'total_interest', type: 'numeric', precision: 16, scale: 2, default: 0 })
  totalInterest: string;

  @Column({ name: 'total_receipts', type: 'numeric', precision: 16, scale: 2, default: 0 })
  totalReceipts: string;

  @Column({ name: 'total_business_expenses', type: 'numeric', precision: 16, scale: 2, default: 0 })
  totalBusinessExpenses: string;

  /** Income by the rules: wages + interest + receipts − business expenses. */
  @Column({ name: 'computed_income', type: 'numeric', precision: 16, scale: 2, default: 0 })
  computedIncome: string;

  @Column({ name: 'computed_deductions', type: 'numeric', precision: 16, scale: 2, default: 0 })
  computedDeductions: string;

  @Column({ name: 'taxable_income', type: 'numeric', precision: 16, scale: 2, default: 0 })
  taxableIncome: string;

  @Column({ name: 'computed_tax', type: 'numeric', precision: 16, scale: 2, default: 0 })
  computedTax: string;

  @Column({ name: 'tax_withheld', type: 'numeric', precision: 16, scale: 2, default: 0 })
  taxWithheld: string;

  @Column({ name: 'computed_refund', type: 'numeric', precision: 16, scale: 2, default: 0 })
  computedRefund: string;
}

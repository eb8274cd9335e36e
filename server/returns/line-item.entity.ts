import { Column, Entity, PrimaryColumn } from 'typeorm';
import type { LineCode } from '../../shared/returns/line-codes';

/**
 * One line of a return: a line code and an amount. A code may repeat (itemised entries);
 * `lineNo` numbers a return's lines 1, 2, … in the order they were filed.
 * The database checks that `returnId` names an existing return (see the intake migration).
 * The table is partitioned by `taxYear`, the return's year copied in by intake
 * (docs/design.md#partitions-by-tax-year).
 */
@Entity({ name: 'line_item' })
export class LineItem {
  @PrimaryColumn({ name: 'return_id', type: 'uuid' })
  returnId: string;

  @PrimaryColumn({ name: 'line_no', type: 'smallint' })
  lineNo: number;

  /** The return's tax year: the partition key, part of the primary key as PostgreSQL requires. */
  @PrimaryColumn({ name: 'tax_year', type: 'smallint' })
  taxYear: number;

  @Column({ name: 'line_code', type: 'text' })
  lineCode: LineCode;

  /** numeric(14,2) as a decimal string, e.g. "1234.50". */
  @Column({ type: 'numeric', precision: 14, scale: 2 })
  amount: string;
}

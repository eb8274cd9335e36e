import { Column, Entity, JoinColumn, ManyToOne, PrimaryGeneratedColumn } from 'typeorm';
import type { StatementKind } from '../../shared/returns/line-codes';
import { FilingBatch } from '../batches/filing-batch.entity';

/**
 * An amount a third party (employer, bank, card processor) reported about a taxpayer for
 * a tax year, matched against the return by TIN and year. Kept by TIN, not by return: a
 * statement about someone who filed nothing is worth as much as one that matches.
 */
@Entity({ name: 'third_party_statement' })
export class ThirdPartyStatement {
  @PrimaryGeneratedColumn({ type: 'bigint' })
  id: string;

  @Column({ name: 'batch_id', type: 'uuid' })
  batchId: string;

  @ManyToOne(() => FilingBatch)
  @JoinColumn({ name: 'batch_id' })
  batch?: FilingBatch;

  @Column({ type: 'char', length: 9 })
  tin: string;

  @Column({ name: 'tax_year', type: 'smallint' })
  taxYear: number;

  @Column({ type: 'text' })
  kind: StatementKind;

  @Column({ type: 'text' })
  payer: string;

  /** numeric(14,2) as a decimal string. */
  @Column({ type: 'numeric', precision: 14, scale: 2 })
  amount: string;

  @Column({ name: 'source_row', type: 'integer' })
  sourceRow: number;
}

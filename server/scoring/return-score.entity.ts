import { Column, Entity, PrimaryColumn, PrimaryGeneratedColumn } from 'typeorm';
import type { ScoreBreakdown } from '../../shared/scoring/breakdown';

/**
 * One return's score under one profile version, with everything needed to explain it.
 * Partitioned by `taxYear`, the return's year (docs/design.md#partitions-by-tax-year).
 */
@Entity({ name: 'return_score' })
export class ReturnScore {
  @PrimaryGeneratedColumn({ type: 'bigint' })
  id: string;

  /** The return's tax year: the partition key, so part of the primary key (id alone is unique too). */
  @PrimaryColumn({ name: 'tax_year', type: 'smallint' })
  taxYear: number;

  @Column({ name: 'return_id', type: 'uuid' })
  returnId: string;

  @Column({ name: 'batch_id', type: 'uuid' })
  batchId: string;

  @Column({ name: 'profile_version', type: 'integer' })
  profileVersion: number;

  /** 'failed' when the return could not be scored; `failureReason` says why. */
  @Column({ type: 'text' })
  status: 'scored' | 'failed';

  @Column({ name: 'risk_score', type: 'numeric', precision: 5, scale: 1, nullable: true })
  riskScore: string | null;

  @Column({ name: 'amount_at_stake', type: 'numeric', precision: 14, scale: 2, nullable: true })
  amountAtStake: string | null;

  @Column({ type: 'numeric', precision: 18, scale: 2, nullable: true })
  priority: string | null;

  @Column({ type: 'jsonb', nullable: true })
  breakdown: ScoreBreakdown | null;

  @Column({ name: 'failure_reason', type: 'text', nullable: true })
  failureReason: string | null;

  @Column({ name: 'scored_at', type: 'timestamptz', default: () => 'now()' })
  scoredAt: Date;
}

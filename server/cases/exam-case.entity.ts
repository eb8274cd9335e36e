import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { CaseSelection, CaseState } from '../../shared/cases';

/**
 * The unit of examination work: one per selected return. Score, stake and priority are
 * copied from the score that opened (or last updated) it, so the queue sorts on indexed
 * columns of one table.
 */
@Entity({ name: 'exam_case' })
export class ExamCase {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  @Column({ name: 'return_id', type: 'uuid', unique: true })
  returnId: string;

  @Column({ name: 'taxpayer_id', type: 'uuid' })
  taxpayerId: string;

  @Column({ name: 'batch_id', type: 'uuid' })
  batchId: string;

  @Column({ name: 'score_id', type: 'bigint' })
  scoreId: string;

  /** The return's tax year: with `scoreId`, the key of its score in the year-partitioned return_score. */
  @Column({ name: 'tax_year', type: 'smallint' })
  taxYear: number;

  @Column({ name: 'risk_score', type: 'numeric', precision: 5, scale: 1 })
  riskScore: string;

  @Column({ name: 'amount_at_stake', type: 'numeric', precision: 14, scale: 2 })
  amountAtStake: string;

  @Column({ type: 'numeric', precision: 18, scale: 2 })
  priority: string;

  @Column({ type: 'text', default: 'open' })
  state: CaseState;

  /** 'score' when the score selected it, 'random' when it came from the run's random review sample (docs/methods.md#programme-outcomes). */
  @Column({ type: 'text', default: 'score' })
  selection: CaseSelection;

  @Column({ name: 'assignee_id', type: 'uuid', nullable: true })
  assigneeId: string | null;

  @Column({ name: 'due_date', type: 'date', nullable: true })
  dueDate: string | null;

  @Column({ type: 'text', nullable: true })
  outcome: string | null;

  @Column({ name: 'adjusted_amount', type: 'numeric', precision: 14, scale: 2, nullable: true })
  adjustedAmount: string | null;

  @Column({ name: 'opened_at', type: 'timestamptz', default: () => 'now()' })
  openedAt: Date;

  @Column({ name: 'updated_at', type: 'timestamptz', default: () => 'now()' })
  updatedAt: Date;

  @Column({ name: 'closed_at', type: 'timestamptz', nullable: true })
  closedAt: Date | null;
}

import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';
import type { BatchIssue, BatchState } from '../../shared/returns/batch-rows';
import { User } from '../users/user.entity';

/**
 * One uploaded file set (docs/design.md#batch-states): received → validating → rejected | queued →
 * scoring → scored. A rejected batch keeps only this record and its error report; none of
 * its rows are stored.
 *
 * For the scoring worker: `returnCount` is the total to score; the worker raises
 * `scoredCount` as it goes and moves `state` to `scoring`, then `scored`.
 */
@Entity({ name: 'filing_batch' })
export class FilingBatch {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  /**
   * SHA-256 (hex) of the upload: of the workbook for XLSX; for CSV, of the lines
   * "returns:<sha>", "line_items:<sha>", "statements:<sha>" of the parts sent.
   */
  @Column({ name: 'file_hash', type: 'char', length: 64, unique: true })
  fileHash: string;

  @Column({ type: 'text' })
  format: 'xlsx' | 'csv';

  @Column({ name: 'file_names', type: 'text', array: true })
  fileNames: string[];

  @Column({ type: 'text', default: 'received' })
  state: BatchState;

  @Column({ name: 'return_count', type: 'integer', default: 0 })
  returnCount: number;

  @Column({ name: 'line_item_count', type: 'integer', default: 0 })
  lineItemCount: number;

  @Column({ name: 'statement_count', type: 'integer', default: 0 })
  statementCount: number;

  /** Returns that amend one already on file for the same TIN and tax year. */
  @Column({ name: 'amended_count', type: 'integer', default: 0 })
  amendedCount: number;

  /** Returns scored so far (written by the scoring worker). */
  @Column({ name: 'scored_count', type: 'integer', default: 0 })
  scoredCount: number;

  /** All errors found, even those beyond the stored list. */
  @Column({ name: 'error_count', type: 'integer', default: 0 })
  errorCount: number;

  /** The validation report: up to MAX_REPORTED_ERRORS errors and an "and N more" line. */
  @Column({ type: 'jsonb', default: () => `'[]'` })
  errors: BatchIssue[];

  /** What the clerk should know that did not reject the batch (amended returns). */
  @Column({ type: 'jsonb', default: () => `'[]'` })
  notices: BatchIssue[];

  /** The office's running number of the batch (the database numbers it). */
  @Column({ name: 'batch_no', type: 'integer', insert: false, update: false })
  batchNo: number;

  /** The name given at upload; null: the default label (shared/returns/batch-rows.ts). */
  @Column({ type: 'text', nullable: true })
  label: string | null;

  /** Data rows read so far while the batch is checked. */
  @Column({ name: 'rows_checked', type: 'integer', default: 0 })
  rowsChecked: number;

  /** When the intake last reported progress, by the office clock (stall detection). */
  @Column({ name: 'progress_at', type: 'timestamptz', nullable: true })
  progressAt: Date | null;

  @Column({ name: 'loaded_by', type: 'uuid', nullable: true })
  loadedById: string | null;

  @ManyToOne(() => User, { nullable: true })
  @JoinColumn({ name: 'loaded_by' })
  loadedBy?: User | null;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt: Date;

  @UpdateDateColumn({ name: 'updated_at', type: 'timestamptz' })
  updatedAt: Date;
}

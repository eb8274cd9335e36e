import { Column, Entity, PrimaryColumn } from 'typeorm';

/**
 * A corrected figure behind an adjustment proposal (issue 13): the line's value as filed
 * and as the examiner corrected it, kept with the case when it closes adjusted.
 */
@Entity({ name: 'case_correction' })
export class CaseCorrection {
  @PrimaryColumn({ name: 'case_id', type: 'uuid' })
  caseId: string;

  @PrimaryColumn({ name: 'line_code', type: 'text' })
  lineCode: string;

  @Column({ name: 'filed_amount', type: 'numeric', precision: 14, scale: 2 })
  filedAmount: string;

  @Column({ name: 'corrected_amount', type: 'numeric', precision: 14, scale: 2 })
  correctedAmount: string;

  @Column({ name: 'created_by', type: 'uuid', nullable: true })
  createdBy: string | null;

  @Column({ name: 'created_at', type: 'timestamptz', default: () => 'now()' })
  createdAt: Date;
}

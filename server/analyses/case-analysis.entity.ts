import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';

/** A digit analysis saved to a case as a working paper; immutable (the database refuses changes). */
@Entity({ name: 'case_analysis' })
export class CaseAnalysis {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  @Column({ name: 'case_id', type: 'uuid' })
  caseId: string;

  @Column({ name: 'created_by', type: 'uuid' })
  createdBy: string;

  @Column({ name: 'created_at', type: 'timestamptz', default: () => 'now()' })
  createdAt: Date;

  /** The source as asked for (shared/analyses.ts `AnalysisSource`). */
  @Column({ type: 'jsonb' })
  source: unknown;

  /** The source in words, for the list and the working paper. */
  @Column({ name: 'source_label', type: 'text' })
  sourceLabel: string;

  @Column({ name: 'file_name', type: 'text', nullable: true })
  fileName: string | null;

  @Column({ type: 'char', length: 64, nullable: true })
  sha256: string | null;

  @Column({ name: 'amount_column', type: 'text', nullable: true })
  amountColumn: string | null;

  @Column({ name: 'split_column', type: 'text', nullable: true })
  splitColumn: string | null;

  /** What was read ("column \"amount\" by \"account\""). */
  @Column({ type: 'text' })
  what: string;

  /** The result JSON of `npm run digits -- --json` (shared/digits/schema.ts digitResultSchema). */
  @Column({ type: 'jsonb' })
  result: unknown;
}

import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm';

/**
 * A return preparer (a paid adviser), known by the id returns carry in `preparer_id`.
 * Scoring pools all of one preparer's returns (docs/methods.md#pooled-figures).
 */
@Entity({ name: 'preparer' })
export class Preparer {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  /** The preparer id as filed, e.g. "PRP-0042". */
  @Column({ type: 'text', unique: true })
  code: string;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt: Date;
}

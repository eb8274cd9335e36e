import { Column, CreateDateColumn, Entity, PrimaryColumn } from 'typeorm';
import type { ScoringSettings } from '../../shared/scoring/settings';

/** One version of the scoring weights and parameters. Versions are never edited. */
@Entity({ name: 'scoring_profile' })
export class ScoringProfile {
  @PrimaryColumn({ type: 'integer' })
  version: number;

  @Column({ type: 'jsonb' })
  settings: ScoringSettings;

  @Column({ type: 'text', default: '' })
  note: string;

  @Column({ name: 'author_id', type: 'uuid', nullable: true })
  authorId: string | null;

  /** Exactly one version is active: the one new batches are scored with. */
  @Column({ type: 'boolean', default: false })
  active: boolean;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt: Date;
}

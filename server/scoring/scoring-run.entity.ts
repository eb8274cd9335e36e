import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';

/** A batch scored under one profile version: its shared context and progress. */
@Entity({ name: 'scoring_run' })
export class ScoringRun {
  @PrimaryGeneratedColumn({ type: 'bigint' })
  id: string;

  @Column({ name: 'batch_id', type: 'uuid' })
  batchId: string;

  @Column({ name: 'profile_version', type: 'integer' })
  profileVersion: number;

  @Column({ type: 'integer' })
  total: number;

  @Column({ type: 'integer', default: 0 })
  scored: number;

  @Column({ type: 'integer', default: 0 })
  failed: number;

  /** Batch-wide figures every chunk needs (peer percentiles, preparer pools). */
  @Column({ type: 'jsonb' })
  context: unknown;

  /** The random review sample drawn in the run's finishing step: seed, share, how many were eligible and drawn, and the sampling rate. */
  @Column({ name: 'random_sample', type: 'jsonb', nullable: true })
  randomSample: unknown;

  @Column({ name: 'started_at', type: 'timestamptz', default: () => 'now()' })
  startedAt: Date;

  @Column({ name: 'finished_at', type: 'timestamptz', nullable: true })
  finishedAt: Date | null;
}

import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';

/** One thing that happened to a case: opened, claimed, assigned, moved, noted, lettered. */
@Entity({ name: 'case_event' })
export class CaseEvent {
  @PrimaryGeneratedColumn({ type: 'bigint' })
  id: string;

  @Column({ name: 'case_id', type: 'uuid' })
  caseId: string;

  @Column({ type: 'timestamptz', default: () => 'now()' })
  at: Date;

  @Column({ name: 'actor_id', type: 'uuid', nullable: true })
  actorId: string | null;

  @Column({ type: 'text' })
  kind: string;

  @Column({ name: 'from_state', type: 'text', nullable: true })
  fromState: string | null;

  @Column({ name: 'to_state', type: 'text', nullable: true })
  toState: string | null;

  @Column({ type: 'jsonb', default: () => `'{}'` })
  detail: Record<string, unknown>;
}

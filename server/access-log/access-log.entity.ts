import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { AccessAction } from '../../shared/access-log';
import type { Role } from '../../shared/roles';

/** One line of the append-only access log (the database refuses updates and deletes). */
@Entity({ name: 'access_log' })
export class AccessLog {
  @PrimaryGeneratedColumn({ type: 'bigint' })
  id: string;

  @Column({ type: 'timestamptz', default: () => 'now()' })
  at: Date;

  @Column({ name: 'user_id', type: 'uuid', nullable: true })
  userId: string | null;

  @Column({ type: 'text', nullable: true })
  username: string | null;

  @Column({ type: 'text', nullable: true })
  role: Role | null;

  @Column({ type: 'text' })
  action: AccessAction;

  @Column({ type: 'text' })
  route: string;

  @Column({ name: 'record_type', type: 'text', nullable: true })
  recordType: string | null;

  @Column({ name: 'record_id', type: 'text', nullable: true })
  recordId: string | null;

  @Column({ name: 'taxpayer_id', type: 'uuid', nullable: true })
  taxpayerId: string | null;

  @Column({ name: 'taxpayer_label', type: 'text', nullable: true })
  taxpayerLabel: string | null;

  @Column({ type: 'text', nullable: true })
  detail: string | null;
}

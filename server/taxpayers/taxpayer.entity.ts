import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';
import type { ActivityCode } from '../../shared/returns/line-codes';

/**
 * A taxpayer, known by TIN. Created by the first batch that names the TIN; later batches
 * update the name, activity and contact details to what they last filed.
 */
@Entity({ name: 'taxpayer' })
export class Taxpayer {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  /** 9 digits as text (leading zeros matter). Shown masked on screens. */
  @Column({ type: 'char', length: 9, unique: true })
  tin: string;

  @Column({ type: 'text' })
  name: string;

  @Column({ name: 'activity_code', type: 'text' })
  activityCode: ActivityCode;

  /** Where document-request letters go unless the examiner gives another address. */
  @Column({ type: 'text', nullable: true })
  email: string | null;

  @Column({ name: 'postal_address', type: 'text', nullable: true })
  postalAddress: string | null;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt: Date;

  @UpdateDateColumn({ name: 'updated_at', type: 'timestamptz' })
  updatedAt: Date;
}

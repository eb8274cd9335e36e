import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { DocumentRequestState } from '../../shared/letters';

/**
 * A request for records sent to a taxpayer, with its one-time reply link. Only the SHA-256
 * hash of the link's token is stored: the token itself exists in the e-mail alone.
 */
@Entity({ name: 'document_request' })
export class DocumentRequest {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  @Column({ name: 'case_id', type: 'uuid' })
  caseId: string;

  @Column({ name: 'letter_id', type: 'uuid', unique: true })
  letterId: string;

  @Column({ type: 'jsonb' })
  items: string[];

  /** Last day a reply is accepted (YYYY-MM-DD, inclusive). */
  @Column({ name: 'due_date', type: 'date' })
  dueDate: string;

  @Column({ name: 'token_hash', type: 'char', length: 64, unique: true })
  tokenHash: string;

  @Column({ type: 'text', default: 'sent' })
  state: DocumentRequestState;

  @Column({ type: 'text' })
  email: string;

  @Column({ name: 'created_at', type: 'timestamptz', default: () => 'now()' })
  createdAt: Date;

  /** Who ended the sends: the taxpayer said that is everything, or the due date passed after a send. */
  @Column({ name: 'completed_by', type: 'text', nullable: true })
  completedBy: 'taxpayer' | 'due-date' | null;

  @Column({ name: 'answered_at', type: 'timestamptz', nullable: true })
  answeredAt: Date | null;
}

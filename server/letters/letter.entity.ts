import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { LetterKind } from '../../shared/letters';

/**
 * A letter kept with a case: a document request sent to the taxpayer or a referral memo.
 * `pdf` is the office copy; for a document request the reply token is masked in it, and
 * `sentSha256` is the hash of the PDF as it was mailed (so a copy the taxpayer shows can be
 * checked against the record without the office keeping the token).
 */
@Entity({ name: 'letter' })
export class Letter {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  @Column({ name: 'case_id', type: 'uuid' })
  caseId: string;

  @Column({ type: 'text' })
  kind: LetterKind;

  @Column({ name: 'file_name', type: 'text' })
  fileName: string;

  @Column({ type: 'bytea', select: false })
  pdf: Buffer;

  @Column({ type: 'integer' })
  size: number;

  @Column({ type: 'char', length: 64 })
  sha256: string;

  @Column({ name: 'sent_sha256', type: 'char', length: 64, nullable: true })
  sentSha256: string | null;

  /** The e-mail address for a document request; the unit for a referral memo. */
  @Column({ type: 'text' })
  recipient: string;

  @Column({ type: 'text' })
  subject: string;

  /** The SMTP Message-ID of a mailed letter, to trace it in the mail server's logs. */
  @Column({ name: 'message_id', type: 'text', nullable: true })
  messageId: string | null;

  @Column({ name: 'created_by', type: 'uuid', nullable: true })
  createdBy: string | null;

  @Column({ name: 'created_at', type: 'timestamptz', default: () => 'now()' })
  createdAt: Date;
}

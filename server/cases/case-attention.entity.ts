import { Column, Entity, PrimaryColumn } from 'typeorm';

/**
 * What a case's examiner has not seen yet (issue 14): a taxpayer's reply that arrived since
 * they last opened the case, and when that was. One row per case, written only when either
 * happens (server/cases/case-queue.repository.ts).
 */
@Entity({ name: 'case_attention' })
export class CaseAttention {
  @PrimaryColumn({ name: 'case_id', type: 'uuid' })
  caseId: string;

  /** When an unopened reply arrived; null once the examiner has opened the case. */
  @Column({ name: 'reply_unread_since', type: 'timestamptz', nullable: true })
  replyUnreadSince: Date | null;

  /** When the case's examiner last opened it. */
  @Column({ name: 'assignee_seen_at', type: 'timestamptz', nullable: true })
  assigneeSeenAt: Date | null;
}

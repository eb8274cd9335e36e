import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';

/**
 * One note on a case: who wrote what, when. Append-only (the database refuses updates and
 * deletes; a correction is a new note).
 */
@Entity({ name: 'case_note' })
export class CaseNote {
  @PrimaryGeneratedColumn({ type: 'bigint' })
  id: string;

  @Column({ name: 'case_id', type: 'uuid' })
  caseId: string;

  @Column({ name: 'author_id', type: 'uuid' })
  authorId: string;

  @Column({ type: 'timestamptz', default: () => 'now()' })
  at: Date;

  @Column({ type: 'text' })
  text: string;
}

import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { ReplyFileType } from '../../shared/letters';

/** One file a taxpayer sent through a reply link (kept in the database with the case). */
@Entity({ name: 'reply_upload' })
export class ReplyUpload {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  @Column({ name: 'document_request_id', type: 'uuid' })
  documentRequestId: string;

  /** The name the taxpayer's file had, cleaned of paths and control characters. */
  @Column({ name: 'file_name', type: 'text' })
  fileName: string;

  /** The type found in the file's first bytes, not the one the browser claimed. */
  @Column({ name: 'content_type', type: 'text' })
  contentType: ReplyFileType;

  @Column({ type: 'integer' })
  size: number;

  @Column({ type: 'char', length: 64 })
  sha256: string;

  /** Which send through the link brought the file (1 for the first). */
  @Column({ type: 'integer', default: 1 })
  part: number;

  @Column({ type: 'bytea', select: false })
  content: Buffer;

  @Column({ name: 'created_at', type: 'timestamptz', default: () => 'now()' })
  createdAt: Date;
}

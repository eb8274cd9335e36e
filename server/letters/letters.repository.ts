/**
 * SQL for letters, document requests and reply uploads. Functions take a DataSource or the
 * caller's transaction (EntityManager) so writes commit together with the case's move.
 * Dates come back as text (`::text`) so a calendar date never shifts with a time zone.
 */
import type { EntityManager } from 'typeorm';
import type { DocumentRequestState, LetterKind, ReplyFileType } from '../../shared/letters';
import type { ScoreBreakdown } from '../../shared/scoring/breakdown';
import type { Db } from '../db/db';
import { refreshDeadlines } from '../cases/case-deadline.repository';
import { now as officeNow } from '../clock';

/** What letters need to know about a case, its return and its taxpayer. */
export interface CaseContext {
  id: string;
  state: string;
  riskScore: string;
  amountAtStake: string;
  priority: string;
  openedAt: Date;
  taxpayerId: string;
  assigneeId: string | null;
  assigneeName: string | null;
  returnRef: string;
  taxYear: number;
  taxpayerName: string;
  tin: string;
  activityCode: string;
  email: string | null;
  postalAddress: string | null;
  preparerCode: string | null;
  batchFiles: string[];
  batchCreatedAt: Date;
  profileVersion: number;
  breakdown: ScoreBreakdown | null;
}

/** The case with its return, taxpayer, preparer, batch and score, or null. */
export async function findCaseContext(db: Db, caseId: string): Promise<CaseContext | null> {
  const rows = await db.query(
    `SELECT c.id, c.state, c.risk_score::text AS risk_score, c.amount_at_stake::text AS amount_at_stake, c.priority::text AS priority, c.opened_at,
            c.taxpayer_id, c.assignee_id, a.display_name AS assignee_name,
            r.return_ref, r.tax_year, t.name AS taxpayer_name, t.tin, t.activity_code, t.email, t.postal_address,
            p.code AS preparer_code, b.file_names, b.created_at AS batch_created_at, s.profile_version, s.breakdown
       FROM exam_case c
       JOIN tax_return r ON r.id = c.return_id
       JOIN taxpayer t ON t.id = c.taxpayer_id
       JOIN filing_batch b ON b.id = c.batch_id
       JOIN return_score s ON s.id = c.score_id AND s.tax_year = c.tax_year
       LEFT JOIN preparer p ON p.id = r.preparer_id
       LEFT JOIN app_user a ON a.id = c.assignee_id
      WHERE c.id = $1`,
    [caseId],
  );
  if (!rows.length) return null;
  const r = rows[0];
  return {
    id: r.id,
    state: r.state,
    riskScore: r.risk_score,
    amountAtStake: r.amount_at_stake,
    priority: r.priority,
    openedAt: new Date(r.opened_at),
    taxpayerId: r.taxpayer_id,
    assigneeId: r.assignee_id,
    assigneeName: r.assignee_name,
    returnRef: r.return_ref,
    taxYear: Number(r.tax_year),
    taxpayerName: r.taxpayer_name,
    tin: String(r.tin),
    activityCode: r.activity_code,
    email: r.email,
    postalAddress: r.postal_address,
    preparerCode: r.preparer_code,
    batchFiles: r.file_names ?? [],
    batchCreatedAt: new Date(r.batch_created_at),
    profileVersion: Number(r.profile_version),
    breakdown: r.breakdown,
  };
}

/** The case's taxpayer and TIN for the access log, in one query; null when there is no such case. */
export async function findCaseTaxpayer(db: Db, caseId: string): Promise<{ taxpayerId: string; tin: string } | null> {
  const rows = await db.query(`SELECT c.taxpayer_id, t.tin FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [caseId]);
  return rows.length ? { taxpayerId: rows[0].taxpayer_id, tin: String(rows[0].tin) } : null;
}

/** A new letter row. */
export interface NewLetter {
  id: string;
  caseId: string;
  kind: LetterKind;
  fileName: string;
  pdf: Buffer;
  sha256: string;
  sentSha256: string | null;
  recipient: string;
  subject: string;
  messageId: string | null;
  /** The staff member who wrote it; null for a letter the daily pass sends (a reminder). */
  createdBy: string | null;
}

/** Stores a letter's PDF and particulars. */
export async function insertLetter(m: EntityManager, l: NewLetter): Promise<void> {
  await m.query(
    `INSERT INTO letter (id, case_id, kind, file_name, pdf, size, sha256, sent_sha256, recipient, subject, message_id, created_by)
     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12)`,
    [l.id, l.caseId, l.kind, l.fileName, l.pdf, l.pdf.length, l.sha256, l.sentSha256, l.recipient, l.subject, l.messageId, l.createdBy],
  );
}

/** Records the Message-ID the SMTP server gave a mailed letter. */
export async function setLetterMessageId(m: EntityManager, letterId: string, messageId: string | null): Promise<void> {
  await m.query(`UPDATE letter SET message_id = $2 WHERE id = $1`, [letterId, messageId]);
}

/** Stores a document request; `tokenHash` is the SHA-256 of the reply token, never the token. */
export async function insertDocumentRequest(
  m: EntityManager,
  r: { id: string; caseId: string; letterId: string; items: string[]; dueDate: string; tokenHash: string; email: string },
): Promise<void> {
  await m.query(`INSERT INTO document_request (id, case_id, letter_id, items, due_date, token_hash, email) VALUES ($1, $2, $3, $4::jsonb, $5, $6, $7)`, [
    r.id,
    r.caseId,
    r.letterId,
    JSON.stringify(r.items),
    r.dueDate,
    r.tokenHash,
    r.email,
  ]);
}

/** A letter row as listed (without the PDF bytes). */
export interface LetterRow {
  id: string;
  caseId: string;
  kind: LetterKind;
  recipient: string;
  sha256: string;
  size: number;
  createdAt: Date;
  createdById: string | null;
  createdByName: string | null;
  requestId: string | null;
  items: string[] | null;
  dueDate: string | null;
  requestState: DocumentRequestState | null;
  answeredAt: Date | null;
  completedBy: 'taxpayer' | 'due-date' | null;
}

/** A case's letters, newest first, with their document requests. */
export async function findLetters(db: Db, caseId: string, letterId?: string): Promise<LetterRow[]> {
  const rows = await db.query(
    `SELECT l.id, l.case_id, l.kind, l.recipient, l.sha256, l.size, l.created_at, l.created_by, u.display_name,
            d.id AS request_id, d.items, d.due_date::text AS due_date, d.state AS request_state, d.answered_at, d.completed_by
       FROM letter l
       LEFT JOIN app_user u ON u.id = l.created_by
       LEFT JOIN document_request d ON d.letter_id = l.id
      WHERE l.case_id = $1 AND ($2::uuid IS NULL OR l.id = $2::uuid)
      ORDER BY l.created_at DESC, l.id`,
    [caseId, letterId ?? null],
  );
  return rows.map((r: Record<string, unknown>) => ({
    id: r.id as string,
    caseId: r.case_id as string,
    kind: r.kind as LetterKind,
    recipient: r.recipient as string,
    sha256: String(r.sha256),
    size: Number(r.size),
    createdAt: new Date(r.created_at as string),
    createdById: (r.created_by as string | null) ?? null,
    createdByName: (r.display_name as string | null) ?? null,
    requestId: (r.request_id as string | null) ?? null,
    items: (r.items as string[] | null) ?? null,
    dueDate: (r.due_date as string | null) ?? null,
    requestState: (r.request_state as DocumentRequestState | null) ?? null,
    answeredAt: r.answered_at ? new Date(r.answered_at as string) : null,
    completedBy: (r.completed_by as 'taxpayer' | 'due-date' | null) ?? null,
  }));
}

/** Upload metadata of some document requests. */
export interface UploadRow {
  id: string;
  documentRequestId: string;
  fileName: string;
  contentType: ReplyFileType;
  size: number;
  sha256: string;
  part: number;
  createdAt: Date;
}

/** The files of the given requests, without their bytes. */
export async function findUploads(db: Db, requestIds: string[]): Promise<UploadRow[]> {
  if (!requestIds.length) return [];
  const rows = await db.query(
    `SELECT id, document_request_id, file_name, content_type, size, sha256, part, created_at FROM reply_upload WHERE document_request_id = ANY($1::uuid[]) ORDER BY part, created_at, file_name`,
    [requestIds],
  );
  return rows.map((r: Record<string, unknown>) => ({
    id: r.id as string,
    documentRequestId: r.document_request_id as string,
    fileName: r.file_name as string,
    contentType: r.content_type as ReplyFileType,
    size: Number(r.size),
    sha256: String(r.sha256),
    part: Number(r.part),
    createdAt: new Date(r.created_at as string),
  }));
}

/** A letter's PDF (office copy), if it belongs to the case. */
export async function findLetterPdf(db: Db, caseId: string, letterId: string): Promise<{ kind: LetterKind; fileName: string; pdf: Buffer } | null> {
  const rows = await db.query(`SELECT kind, file_name, pdf FROM letter WHERE id = $1 AND case_id = $2`, [letterId, caseId]);
  return rows.length ? { kind: rows[0].kind, fileName: rows[0].file_name, pdf: rows[0].pdf } : null;
}

/** A reply upload's bytes, if it belongs to a request of the case. */
export async function findUploadContent(
  db: Db,
  caseId: string,
  uploadId: string,
): Promise<{ fileName: string; contentType: ReplyFileType; content: Buffer } | null> {
  const rows = await db.query(
    `SELECT u.file_name, u.content_type, u.content FROM reply_upload u JOIN document_request d ON d.id = u.document_request_id WHERE u.id = $1 AND d.case_id = $2`,
    [uploadId, caseId],
  );
  return rows.length ? { fileName: rows[0].file_name, contentType: rows[0].content_type, content: rows[0].content } : null;
}

/** The notes of a case, oldest first (table case_note, written by the case feature). */
export async function findNotes(db: Db, caseId: string): Promise<{ at: Date; author: string | null; text: string }[]> {
  const rows = await db.query(
    `SELECT n.at, u.display_name, n.text FROM case_note n LEFT JOIN app_user u ON u.id = n.author_id WHERE n.case_id = $1 ORDER BY n.at, n.id`,
    [caseId],
  );
  return rows.map((r: Record<string, unknown>) => ({
    at: new Date(r.at as string),
    author: (r.display_name as string | null) ?? null,
    text: r.text as string,
  }));
}

/** The events of a case, oldest first. */
export async function findEvents(
  db: Db,
  caseId: string,
): Promise<{ at: Date; actor: string | null; kind: string; from: string | null; to: string | null; detail: Record<string, unknown> }[]> {
  const rows = await db.query(
    `SELECT e.at, u.display_name, e.kind, e.from_state, e.to_state, e.detail FROM case_event e LEFT JOIN app_user u ON u.id = e.actor_id WHERE e.case_id = $1 ORDER BY e.at, e.id`,
    [caseId],
  );
  return rows.map((r: Record<string, unknown>) => ({
    at: new Date(r.at as string),
    actor: (r.display_name as string | null) ?? null,
    kind: r.kind as string,
    from: (r.from_state as string | null) ?? null,
    to: (r.to_state as string | null) ?? null,
    detail: (r.detail as Record<string, unknown>) ?? {},
  }));
}

/** A document request found by its token hash, with what the reply page shows. */
export interface RequestByToken {
  id: string;
  caseId: string;
  letterId: string;
  taxpayerId: string;
  taxpayerName: string;
  tin: string;
  items: string[];
  dueDate: string;
  state: DocumentRequestState;
  email: string;
  /** How many sends came through the link so far. */
  sends: number;
}

/** Finds a request by the hash of its token; `lock` takes the row for the reply's transaction. */
export async function findRequestByTokenHash(db: Db, tokenHash: string, lock = false): Promise<RequestByToken | null> {
  const rows = await db.query(
    `SELECT d.id, d.case_id, d.letter_id, c.taxpayer_id, t.name, t.tin, d.items, d.due_date::text AS due_date, d.state, d.email,
            (SELECT coalesce(max(u.part), 0) FROM reply_upload u WHERE u.document_request_id = d.id) AS sends
       FROM document_request d
       JOIN exam_case c ON c.id = d.case_id
       JOIN taxpayer t ON t.id = c.taxpayer_id
      WHERE d.token_hash = $1
      ${lock ? 'FOR UPDATE OF d' : ''}`,
    [tokenHash],
  );
  if (!rows.length) return null;
  const r = rows[0];
  return {
    id: r.id,
    caseId: r.case_id,
    letterId: r.letter_id,
    taxpayerId: r.taxpayer_id,
    taxpayerName: r.name,
    tin: String(r.tin),
    items: r.items,
    dueDate: r.due_date,
    state: r.state,
    email: r.email,
    sends: Number(r.sends),
  };
}

/** Marks an unanswered request whose due date has passed as expired. */
export async function markExpired(db: Db, requestId: string): Promise<void> {
  await db.query(`UPDATE document_request SET state = 'expired' WHERE id = $1 AND state = 'sent'`, [requestId]);
}

/**
 * Stores one send's files as part `part` of the request's reply; when the taxpayer says that
 * is everything (`complete`), marks the request answered. Returns the time of the send.
 */
export async function storeReplyPart(
  m: EntityManager,
  requestId: string,
  part: number,
  files: { fileName: string; contentType: ReplyFileType; size: number; sha256: string; bytes: Buffer }[],
  complete: boolean,
): Promise<Date> {
  const at = officeNow();
  for (const f of files) {
    await m.query(
      `INSERT INTO reply_upload (document_request_id, file_name, content_type, size, sha256, content, part, created_at) VALUES ($1, $2, $3, $4, $5, $6, $7, $8)`,
      [requestId, f.fileName, f.contentType, f.size, f.sha256, f.bytes, part, at],
    );
  }
  if (complete) await m.query(`UPDATE document_request SET state = 'answered', answered_at = $2, completed_by = 'taxpayer' WHERE id = $1`, [requestId, at]);
  return at;
}

/** The sends that came through a request's link, oldest first, with their files' names and sizes. */
export async function findSends(db: Db, requestId: string): Promise<{ part: number; at: Date; files: { fileName: string; size: number }[] }[]> {
  const rows: { part: number; at: Date; files: { fileName: string; size: number }[] }[] = await db.query(
    `SELECT part, min(created_at) AS at, json_agg(json_build_object('fileName', file_name, 'size', size) ORDER BY created_at, file_name) AS files
       FROM reply_upload WHERE document_request_id = $1 GROUP BY part ORDER BY part`,
    [requestId],
  );
  return rows.map((r) => ({ part: Number(r.part), at: new Date(r.at), files: r.files }));
}

/**
 * True when the case has a request still waiting that was sent after this one: only the
 * newest waiting request's answer ends the case's wait.
 */
export async function hasNewerWaitingRequest(db: Db, caseId: string, requestId: string): Promise<boolean> {
  const rows = await db.query(
    `SELECT 1 FROM document_request WHERE case_id = $1 AND id <> $2 AND state = 'sent'
        AND created_at > (SELECT created_at FROM document_request WHERE id = $2) LIMIT 1`,
    [caseId, requestId],
  );
  return rows.length > 0;
}

/** The lines of a case's return as filed, in cents (the rules' input for corrected figures). */
export async function findFiledLines(db: Db, caseId: string): Promise<{ code: string; cents: number }[]> {
  const rows: { code: string; cents: string }[] = await db.query(
    `SELECT li.line_code AS code, (li.amount * 100)::bigint::text AS cents
       FROM exam_case c JOIN line_item li ON li.return_id = c.return_id
      WHERE c.id = $1 ORDER BY li.line_no`,
    [caseId],
  );
  return rows.map((r) => ({ code: r.code, cents: Number(r.cents) }));
}

/**
 * Where a letter to the case's taxpayer goes: the address on file, else the address the
 * newest document request of the case went to; null when there is neither.
 */
export async function findTaxpayerAddress(db: Db, caseId: string): Promise<string | null> {
  const rows: { email: string | null }[] = await db.query(
    `SELECT coalesce(nullif(t.email, ''),
                     (SELECT d.email FROM document_request d WHERE d.case_id = c.id ORDER BY d.created_at DESC LIMIT 1)) AS email
       FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`,
    [caseId],
  );
  return rows[0]?.email ?? null;
}

/** True when the taxpayer sent any file through a reply link of the case. */
export async function caseHasReplyFiles(db: Db, caseId: string): Promise<boolean> {
  const rows = await db.query(`SELECT 1 FROM reply_upload u JOIN document_request d ON d.id = u.document_request_id WHERE d.case_id = $1 LIMIT 1`, [caseId]);
  return rows.length > 0;
}

/**
 * Keeps the corrected figures of the case's latest closing (amounts as decimal text) and
 * works out the case's assessment deadline again, which follows them (income the corrections
 * add can lengthen the assessment period). A case reopened and closed again replaces its
 * figures; each closing's figures stay in its history event.
 */
export async function replaceCorrections(
  m: EntityManager,
  caseId: string,
  createdBy: string,
  rows: { lineCode: string; filed: string; corrected: string }[],
): Promise<void> {
  await m.query(`DELETE FROM case_correction WHERE case_id = $1`, [caseId]);
  if (rows.length)
    await m.query(
      `INSERT INTO case_correction (case_id, line_code, filed_amount, corrected_amount, created_by)
       SELECT $1, u.code, u.filed, u.corrected, $2 FROM unnest($3::text[], $4::numeric[], $5::numeric[]) AS u(code, filed, corrected)`,
      [caseId, createdBy, rows.map((r) => r.lineCode), rows.map((r) => r.filed), rows.map((r) => r.corrected)],
    );
  await refreshDeadlines(m, [caseId]);
}

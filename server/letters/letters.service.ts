/**
 * Letters kept with a case: sending a document request (PDF by pdfkit, e-mailed through the
 * configured SMTP server, case moved to awaiting reply) and writing a referral memo (PDF,
 * case moved to referred); listing them and handing out their PDFs and the taxpayer's
 * replies, each read written to the access log.
 *
 * Sending happens inside the database transaction, as its last step: if the SMTP server
 * refuses or cannot be reached, the transaction rolls back and no letter, request or case
 * move is left behind, so "every letter sent is kept with the case" holds and nothing is
 * kept that was not sent. The reverse window (mail accepted, then the commit fails) is
 * a few milliseconds wide; the taxpayer would then hold a link the server does not know,
 * which answers "not found" and harms nobody; the examiner sees no letter and sends again.
 */
import { createHash, randomBytes, randomUUID } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import { z } from 'zod';
import { maskTin } from '../../shared/access-log';
import { CASE_STATE_LABELS, type CaseState } from '../../shared/cases';
import {
  REFERRAL_UNIT_LABELS,
  type DocumentRequestInput,
  type DocumentRequestState,
  addDays,
  DUE_DATE_MAX_DAYS,
  DUE_DATE_MIN_DAYS,
  type LetterContext,
  type LetterCreated,
  type LetterDto,
  type LetterList,
  type LetterPreview,
  type ReferralInput,
} from '../../shared/letters';
import { ACTIVITY_CODES } from '../../shared/returns/line-codes';
import { centsFromNumeric } from '../../shared/returns/money';
import { recordAccess } from '../access-log/access-log.service';
import { today as clockToday } from '../clock';
import type { StaffAudit } from '../access-log/audit-context';
import { assertMayAct, lockCase, moveCase } from '../cases/case-workflow';
import type { ExamCase } from '../cases/exam-case.entity';
import type { Db } from '../db/db';
import { HttpError } from '../http/errors';
import type { Mailer } from '../mail/mailer';
import { documentRequestMail } from './letter-mail';
import {
  findCaseContext,
  findCaseTaxpayer,
  findEvents,
  findLetterPdf,
  findLetters,
  findNotes,
  findUploadContent,
  findUploads,
  insertDocumentRequest,
  insertLetter,
  setLetterMessageId,
  type CaseContext,
  type LetterRow,
} from './letters.repository';
import { renderDocumentRequestPdf, type DocumentRequestLetter } from './pdf/document-request-pdf';
import { referralMemoText, renderReferralMemoPdf, type ReferralMemo } from './pdf/referral-memo-pdf';
import { isUuid } from '../../shared/ids';

/** What the letter services need. */
export interface LetterDeps {
  dataSource: DataSource;
  mailer: Mailer;
  /** Base of links in letters (config.publicUrl). */
  publicUrl: string;
}

/** Hex SHA-256 of a letter's bytes (kept with it) or a reply token. */
export const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex');

/** The hash stored for a reply token (the token itself is never stored). */
export function hashReplyToken(token: string): string {
  return sha256(token);
}

/** How the office copy of a letter shows the reply link: the path without its secret. */
export function maskedReplyUrl(publicUrl: string): string {
  return `${publicUrl}/reply/•••••••• (personal link, sent to the taxpayer only)`;
}

const ACTIVITY_WORDS: Record<(typeof ACTIVITY_CODES)[number], string> = {
  none: 'None declared',
  retail: 'Retail',
  'food-service': 'Food service',
  construction: 'Construction',
  'personal-care': 'Personal care',
  consulting: 'Consulting',
  transport: 'Transport',
  rental: 'Rental',
  farming: 'Farming',
  other: 'Other',
};

/**
 * The effective state: a request past its due date with no send has expired; one with sends
 * is answered (the records came in parts, and the date ended them).
 */
export function effectiveRequestState(state: DocumentRequestState, dueDate: string, today = clockToday(), sends = 0): DocumentRequestState {
  if (state === 'sent' && dueDate < today) return sends > 0 ? 'answered' : 'expired';
  return state;
}

function toDtos(rows: LetterRow[], uploads: Awaited<ReturnType<typeof findUploads>>): LetterDto[] {
  const sendsOf = (requestId: string) => uploads.reduce((n, u) => (u.documentRequestId === requestId ? Math.max(n, u.part) : n), 0);
  return rows.map((r) => ({
    id: r.id,
    caseId: r.caseId,
    kind: r.kind,
    recipient: r.recipient,
    sha256: r.sha256,
    size: r.size,
    createdAt: r.createdAt.toISOString(),
    createdBy: r.createdById ? { id: r.createdById, displayName: r.createdByName ?? '' } : null,
    documentRequest:
      r.requestId && r.items && r.dueDate && r.requestState
        ? {
            id: r.requestId,
            items: r.items,
            dueDate: r.dueDate,
            state: effectiveRequestState(r.requestState, r.dueDate, clockToday(), sendsOf(r.requestId)),
            answeredAt: r.answeredAt ? r.answeredAt.toISOString() : null,
            sends: sendsOf(r.requestId),
            completedBy: r.completedBy ?? (r.requestState === 'sent' && r.dueDate < clockToday() && sendsOf(r.requestId) > 0 ? 'due-date' : null),
            uploads: uploads
              .filter((u) => u.documentRequestId === r.requestId)
              .map((u) => ({
                id: u.id,
                fileName: u.fileName,
                contentType: u.contentType,
                size: u.size,
                sha256: u.sha256,
                part: u.part,
                createdAt: u.createdAt.toISOString(),
              })),
          }
        : null,
  }));
}

async function letterDto(ds: DataSource, caseId: string, letterId: string): Promise<LetterDto> {
  const rows = await findLetters(ds, caseId, letterId);
  const uploads = await findUploads(
    ds,
    rows.map((r) => r.requestId).filter((x): x is string => !!x),
  );
  return toDtos(rows, uploads)[0];
}

const EmailSchema = z.email();

/** Where a document request goes: the address typed, else the one on file; 422 naming the field when neither is usable. */
function requestAddress(ctx: Pick<CaseContext, 'email'>, input: Pick<DocumentRequestInput, 'email'>): string {
  const to = input.email ? input.email : ctx.email;
  if (!to)
    throw new HttpError(422, 'This taxpayer has no e-mail address on file. Enter the address the request should go to.', {
      issues: [{ path: 'email', message: 'No e-mail address on file: enter one' }],
    });
  if (!EmailSchema.safeParse(to).success) {
    throw new HttpError(422, `The e-mail address on file (${to}) is not a usable address. Enter the address the request should go to.`, {
      issues: [{ path: 'email', message: 'The address on file is not usable: enter one' }],
    });
  }
  return to;
}

/**
 * What the request form needs before Send (issue 14): the office's today and the due-date
 * window by the office clock, and the taxpayer's e-mail address on file (logged as a view).
 */
export async function letterContext(ds: DataSource, audit: StaffAudit, caseId: string): Promise<LetterContext> {
  const ctx = await contextForRead(ds, caseId);
  await logLetterPreview(ds, audit, ctx, 'e-mail address on file');
  const t = clockToday();
  return {
    today: t,
    emailOnFile: ctx.email && EmailSchema.safeParse(ctx.email).success ? ctx.email : null,
    earliestDueDate: addDays(t, DUE_DATE_MIN_DAYS),
    latestDueDate: addDays(t, DUE_DATE_MAX_DAYS),
  };
}

/** 409 unless the case is in review, the only state a document request is sent from. */
function assertMayRequest(state: CaseState): void {
  if (state !== 'in_review')
    throw new HttpError(
      409,
      `A document request can be sent only while the case is in review; this case is ${CASE_STATE_LABELS[state]?.toLowerCase() ?? state}.`,
    );
}

/** The document request's words for a case: what the preview shows and the send mails. */
function requestLetter(ctx: CaseContext, input: DocumentRequestInput, reference: string, replyUrl: string, signedBy: string): DocumentRequestLetter {
  return {
    reference,
    date: clockToday(),
    taxpayerName: ctx.taxpayerName,
    postalAddress: ctx.postalAddress,
    taxYear: ctx.taxYear,
    returnRef: ctx.returnRef,
    items: input.items,
    dueDate: input.dueDate,
    replyUrl,
    signedBy,
  };
}

/**
 * The document request as it would be sent (issue 14: the examiner reads it before Send):
 * the e-mail's text with the reply link masked; nothing stored or sent.
 * @throws HttpError as {@link sendDocumentRequest}, except 502
 */
export async function previewDocumentRequest(deps: LetterDeps, audit: StaffAudit, caseId: string, input: DocumentRequestInput): Promise<LetterPreview> {
  const ctx = await contextForRead(deps.dataSource, caseId);
  assertMayAct(audit.actor, { assigneeId: ctx.assigneeId });
  assertMayRequest(ctx.state as CaseState);
  const to = requestAddress(ctx, input);
  const letter = requestLetter(ctx, input, 'DR-(given on sending)', maskedReplyUrl(deps.publicUrl), audit.actor.displayName);
  const mail = documentRequestMail(letter, to, Buffer.alloc(0), 'preview.pdf');
  await logLetterPreview(deps.dataSource, audit, ctx, 'document_request preview');
  return { kind: 'document_request', to, subject: String(mail.subject), text: String(mail.text) };
}

/**
 * Sends a document request for a case in review: makes the letter, mails it with the PDF
 * attached to the given address or the one on file, keeps it with the case and moves the
 * case to awaiting reply, all in one transaction.
 * @throws HttpError 404 no case, 403 not the actor's case, 409 not in review, 422 no usable address, 502 mail refused
 */
export async function sendDocumentRequest(deps: LetterDeps, audit: StaffAudit, caseId: string, input: DocumentRequestInput): Promise<LetterCreated> {
  const actor = audit.actor;
  const letterId = randomUUID();
  const moved = await deps.dataSource.transaction(async (m) => {
    const locked = await lockCase(m, caseId);
    assertMayAct(actor, locked);
    assertMayRequest(locked.state);
    const ctx = (await findCaseContext(m, caseId))!;
    const to = requestAddress(ctx, input);

    // 32 random bytes: the link cannot be guessed; only its hash is stored.
    const token = randomBytes(32).toString('base64url');
    const reference = `DR-${letterId.slice(0, 8).toUpperCase()}`;
    const letter = requestLetter(ctx, input, reference, `${deps.publicUrl}/reply/${token}`, actor.displayName);
    // The mailed copy holds the link; the office copy masks it, so nobody who can read the
    // database (or a backup) can answer in the taxpayer's place.
    const sentPdf = await renderDocumentRequestPdf(letter);
    const officePdf = await renderDocumentRequestPdf({ ...letter, replyUrl: maskedReplyUrl(deps.publicUrl) });
    const fileName = `request-for-records-${reference}.pdf`;
    const mail = documentRequestMail(letter, to, sentPdf, fileName);

    await insertLetter(m, {
      id: letterId,
      caseId,
      kind: 'document_request',
      fileName,
      pdf: officePdf,
      sha256: sha256(officePdf),
      sentSha256: sha256(sentPdf),
      recipient: to,
      subject: String(mail.subject),
      messageId: null,
      createdBy: actor.id,
    });
    const requestId = randomUUID();
    await insertDocumentRequest(m, {
      id: requestId,
      caseId,
      letterId,
      items: input.items,
      dueDate: input.dueDate,
      tokenHash: hashReplyToken(token),
      email: to,
    });
    const c = await moveCase(m, audit, locked, 'awaiting_reply', {
      kind: 'document-request',
      detail: { letterId, documentRequestId: requestId, dueDate: input.dueDate, items: input.items.length },
      dueDate: input.dueDate,
    });

    // Last step of the transaction: a refused send rolls everything above back.
    let info: { messageId?: string };
    try {
      info = await deps.mailer.transport.sendMail({ ...mail, from: deps.mailer.from });
    } catch (e) {
      const why = e && typeof e === 'object' && 'message' in e ? String(e.message) : String(e);
      console.error(`[letters] sending document request ${reference} failed:`, why);
      throw new HttpError(
        502,
        'The letter could not be sent: the mail server did not accept it. Nothing was saved and the case has not moved. Please try again in a few minutes.',
      );
    }
    await setLetterMessageId(m, letterId, info.messageId ?? null);
    return c.state;
  });
  return { letter: await letterDto(deps.dataSource, caseId, letterId), caseState: moved };
}

const EVENT_WORDS: Record<string, string> = {
  opened: 'Case opened',
  claimed: 'Claimed',
  assigned: 'Assigned',
  reassigned: 'Reassigned',
  transition: 'Moved',
  'document-request': 'Document request sent',
  'reply-received': 'Reply received from the taxpayer',
  referral: 'Referred',
  note: 'Note added',
};

/**
 * Writes a referral memo for a case in review or awaiting a reply: the PDF with the case
 * facts, score breakdown, digit chart, notes and history, kept with the case; the case
 * moves to referred with the unit and summary as its outcome.
 * @throws HttpError 404, 403, 409 as for any move
 */
export async function referCase(deps: LetterDeps, audit: StaffAudit, caseId: string, input: ReferralInput): Promise<LetterCreated> {
  const actor = audit.actor;
  const letterId = randomUUID();
  const unit = input.unit ?? 'field-audit';
  const unitLabel = REFERRAL_UNIT_LABELS[unit];
  const moved = await deps.dataSource.transaction(async (m) => {
    const { locked, ctx } = await lockForReferral(m, audit, caseId);
    const reference = `RM-${letterId.slice(0, 8).toUpperCase()}`;
    const pdf = await renderReferralMemoPdf(await referralMemo(m, ctx, caseId, actor.displayName, reference, unitLabel, input.summary));
    await insertLetter(m, {
      id: letterId,
      caseId,
      kind: 'referral_memo',
      fileName: `referral-memo-${reference}.pdf`,
      pdf,
      sha256: sha256(pdf),
      sentSha256: null,
      recipient: unitLabel,
      subject: `Referral memo ${reference}: ${ctx.returnRef}`,
      messageId: null,
      createdBy: actor.id,
    });
    const c = await moveCase(m, audit, locked, 'referred', {
      kind: 'referral',
      outcome: `Referred to the ${unitLabel}: ${input.summary}`.slice(0, 2000),
      detail: { letterId, unit },
    });
    return c.state;
  });
  return { letter: await letterDto(deps.dataSource, caseId, letterId), caseState: moved };
}

/** Locks a case the actor may refer, with its context; 409 unless it is in review or awaiting a reply. */
async function lockForReferral(m: EntityManager, audit: StaffAudit, caseId: string): Promise<{ locked: ExamCase; ctx: CaseContext }> {
  const locked = await lockCase(m, caseId);
  assertMayAct(audit.actor, locked);
  if (locked.state !== 'in_review' && locked.state !== 'awaiting_reply')
    throw new HttpError(
      409,
      `A case can be referred while it is in review or awaiting a reply; this case is ${CASE_STATE_LABELS[locked.state].toLowerCase()}.`,
    );
  return { locked, ctx: (await findCaseContext(m, caseId))! };
}

/** What a referral memo sets out (the PDF and its text preview share it). */
async function referralMemo(
  m: EntityManager,
  ctx: CaseContext,
  caseId: string,
  author: string,
  reference: string,
  unitLabel: string,
  summary: string,
): Promise<ReferralMemo> {
  const notes = await findNotes(m, caseId);
  const events = await findEvents(m, caseId);
  return {
    reference,
    date: clockToday(),
    unitLabel,
    summary,
    author,
    facts: {
      returnRef: ctx.returnRef,
      taxYear: ctx.taxYear,
      taxpayerName: ctx.taxpayerName,
      maskedTin: maskTin(ctx.tin),
      activity: ACTIVITY_WORDS[ctx.activityCode as keyof typeof ACTIVITY_WORDS] ?? ctx.activityCode,
      preparer: ctx.preparerCode,
      batch: `${ctx.batchFiles.join(', ') || 'batch'} (loaded ${ctx.batchCreatedAt.toISOString().slice(0, 10)})`,
      caseState: CASE_STATE_LABELS[ctx.state as CaseState] ?? ctx.state,
      openedAt: ctx.openedAt,
      assignee: ctx.assigneeName,
      riskScore: ctx.riskScore,
      profileVersion: ctx.profileVersion,
      amountAtStakeCents: centsFromNumeric(ctx.amountAtStake) ?? 0,
      priority: ctx.priority,
    },
    breakdown: ctx.breakdown,
    notes: notes.map((n) => ({ at: n.at, who: n.author, text: n.text })),
    events: events.map((e) => {
      // Atkinson Hyperlegible has no arrow glyph: the move is written in words.
      const move =
        e.from && e.to
          ? ` (from ${(CASE_STATE_LABELS[e.from as CaseState] ?? e.from).toLowerCase()} to ${(CASE_STATE_LABELS[e.to as CaseState] ?? e.to).toLowerCase()})`
          : '';
      const outcome = typeof e.detail.outcome === 'string' ? `: ${e.detail.outcome}` : '';
      return {
        at: e.at,
        who: e.actor ?? (e.kind === 'reply-received' ? 'Taxpayer (reply link)' : null),
        text: `${EVENT_WORDS[e.kind] ?? e.kind}${move}${outcome}`,
      };
    }),
  };
}

/**
 * The memo a referral would write, as text, for the examiner to read before referring;
 * nothing is stored and the case does not move.
 * @throws HttpError 404, 403, 409 as for the referral itself
 */
export async function previewReferralMemo(deps: LetterDeps, audit: StaffAudit, caseId: string, input: ReferralInput): Promise<LetterPreview> {
  const unitLabel = REFERRAL_UNIT_LABELS[input.unit ?? 'field-audit'];
  return deps.dataSource.transaction(async (m) => {
    const { ctx } = await lockForReferral(m, audit, caseId);
    const memo = await referralMemo(m, ctx, caseId, audit.actor.displayName, 'RM-(given on referring)', unitLabel, input.summary);
    await logLetterPreview(m, audit, ctx, 'referral_memo preview');
    return { kind: 'referral_memo', to: null, subject: `Referral memo: ${ctx.returnRef}, for the ${unitLabel}`, text: referralMemoText(memo) };
  });
}

/** The case's context for a read; 404 when there is no such case. */
async function contextForRead(ds: DataSource, caseId: string): Promise<CaseContext> {
  const ctx = isUuid(caseId) ? await findCaseContext(ds, caseId) : null;
  if (!ctx) throw new HttpError(404, 'No such case.');
  return ctx;
}

/**
 * Logs a look at what a letter would say (or the address it would go to) as a view of the
 * case: the previews show the taxpayer's particulars.
 */
export async function logLetterPreview(db: Db, audit: StaffAudit, ctx: CaseContext, detail: string): Promise<void> {
  await recordAccess(db, audit, {
    action: 'view',
    recordType: 'case',
    recordId: ctx.id,
    taxpayerId: ctx.taxpayerId,
    taxpayerLabel: maskTin(ctx.tin),
    detail,
  });
}

async function caseForRead(ds: DataSource, caseId: string): Promise<{ taxpayerId: string; label: string | null }> {
  const c = isUuid(caseId) ? await findCaseTaxpayer(ds, caseId) : null;
  if (!c) throw new HttpError(404, 'No such case.');
  return { taxpayerId: c.taxpayerId, label: maskTin(c.tin) };
}

/** The letters of a case, newest first, with requests and reply files; logged as a view. */
export async function listLetters(ds: DataSource, audit: StaffAudit, caseId: string): Promise<LetterList> {
  const c = await caseForRead(ds, caseId);
  const rows = await findLetters(ds, caseId);
  const uploads = await findUploads(
    ds,
    rows.map((r) => r.requestId).filter((x): x is string => !!x),
  );
  await recordAccess(ds, audit, { action: 'view', recordType: 'case', recordId: caseId, taxpayerId: c.taxpayerId, taxpayerLabel: c.label, detail: 'letters' });
  return { items: toDtos(rows, uploads) };
}

/** A letter's PDF (the office copy); logged as a view. */
export async function letterPdf(ds: DataSource, audit: StaffAudit, caseId: string, letterId: string): Promise<{ fileName: string; pdf: Buffer }> {
  const c = await caseForRead(ds, caseId);
  const l = isUuid(letterId) ? await findLetterPdf(ds, caseId, letterId) : null;
  if (!l) throw new HttpError(404, 'This case has no such letter.');
  await recordAccess(ds, audit, {
    action: 'view',
    recordType: 'letter',
    recordId: letterId,
    taxpayerId: c.taxpayerId,
    taxpayerLabel: c.label,
    detail: `${l.kind} PDF`,
  });
  return { fileName: l.fileName, pdf: l.pdf };
}

/** A file the taxpayer sent back; logged as a view. */
export async function replyUploadFile(
  ds: DataSource,
  audit: StaffAudit,
  caseId: string,
  uploadId: string,
): Promise<{ fileName: string; contentType: string; content: Buffer }> {
  const c = await caseForRead(ds, caseId);
  const u = isUuid(uploadId) ? await findUploadContent(ds, caseId, uploadId) : null;
  if (!u) throw new HttpError(404, 'This case has no such reply file.');
  // The name the taxpayer gave the file stays out of the log: the administrator reads the
  // log without access to taxpayer data, and names like "J Smith bank 2024.pdf" are such data.
  await recordAccess(ds, audit, {
    action: 'view',
    recordType: 'reply_upload',
    recordId: uploadId,
    taxpayerId: c.taxpayerId,
    taxpayerLabel: c.label,
    detail: 'reply file',
  });
  return u;
}

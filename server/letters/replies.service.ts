/**
 * The taxpayer's side of a document request: the one-time reply link. The taxpayer has no
 * account; the link's token is the only key, found by its SHA-256 hash. The page shows
 * what is asked and by when, and nothing else about the case (no TIN, no figures). A reply
 * stores the files, uses the link up, records a 'reply-received' case event with no actor,
 * and brings a case that was awaiting the reply back to in review.
 */
import type { DataSource } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import {
  longDate,
  OFFICE,
  REPLY_FILE_TYPES,
  REPLY_MAX_FILE_BYTES,
  REPLY_MAX_FILES,
  REPLY_MAX_TOTAL_BYTES,
  type ReplyReceipt,
  type ReplyRequestDto,
} from '../../shared/letters';
import { recordAccess } from '../access-log/access-log.service';
import type { AuditContext } from '../access-log/audit-context';
import { today } from '../clock';
import { endReplyWait } from '../cases/case-workflow';
import { markReplyUnread } from '../cases/case-queue.repository';
import { HttpError } from '../http/errors';
import { findRequestByTokenHash, hasNewerWaitingRequest, markExpired, storeReply, type RequestByToken } from './letters.repository';
import { hashReplyToken } from './letters.service';
import { checkReplyFiles, type IncomingFile } from './reply-files';

/** A token as issued: 32 random bytes in base64url. Anything else cannot be a link of ours. */
const TOKEN = /^[A-Za-z0-9_-]{43}$/;

const NOT_FOUND = 'This reply link is not known. Check that the whole link was copied from the e-mail, or contact the office.';

function closed(state: 'answered' | 'expired', dueDate: string): HttpError {
  return state === 'answered'
    ? new HttpError(410, 'This link has already been used: your reply was received. If you have more to send, please contact the office.', { state })
    : new HttpError(410, `This link expired after its due date, ${longDate(dueDate)}. If you still want to send records, please contact the office.`, {
        state,
      });
}

/**
 * Finds the request a token opens and checks it can still be answered.
 * @throws HttpError 404 unknown token, 410 used or past its due date (with `state`)
 */
export async function openRequest(ds: DataSource, token: string): Promise<RequestByToken> {
  const r = TOKEN.test(token) ? await findRequestByTokenHash(ds, hashReplyToken(token)) : null;
  if (!r) throw new HttpError(404, NOT_FOUND);
  if (r.state === 'answered') throw closed('answered', r.dueDate);
  if (r.state === 'expired' || r.dueDate < today()) {
    // Record what the date already says, so staff lists and this page agree.
    await markExpired(ds, r.id);
    throw closed('expired', r.dueDate);
  }
  return r;
}

/** What the reply page shows for a usable link; the visit is written to the access log. */
export async function getReplyRequest(ds: DataSource, audit: AuditContext, token: string): Promise<ReplyRequestDto> {
  const r = await openRequest(ds, token);
  await recordAccess(ds, audit, {
    action: 'view',
    recordType: 'document_request',
    recordId: r.id,
    taxpayerId: r.taxpayerId,
    taxpayerLabel: maskTin(r.tin),
    detail: 'reply link opened',
  });
  return {
    state: 'open',
    taxpayerName: r.taxpayerName,
    items: r.items,
    dueDate: r.dueDate,
    office: { name: OFFICE.name, unit: OFFICE.unit, address: [...OFFICE.address], phone: OFFICE.phone, email: OFFICE.email, hours: OFFICE.hours },
    limits: { maxFiles: REPLY_MAX_FILES, maxFileBytes: REPLY_MAX_FILE_BYTES, maxTotalBytes: REPLY_MAX_TOTAL_BYTES, types: [...REPLY_FILE_TYPES] },
  };
}

/**
 * Stores a reply in one transaction: the files, the request marked answered, the case
 * event and (when the case awaits this reply) the move back to in review. The request row
 * is locked and checked again inside the transaction, so two uploads racing on one link
 * cannot both succeed.
 * @throws HttpError 404, 410 as {@link openRequest}; 422 for files that fail the checks
 */
export async function receiveReply(ds: DataSource, audit: AuditContext, token: string, files: IncomingFile[]): Promise<ReplyReceipt> {
  const checked = checkReplyFiles(files);
  if (!TOKEN.test(token)) throw new HttpError(404, NOT_FOUND);
  const hash = hashReplyToken(token);
  const result = await ds.transaction(async (m) => {
    const r = await findRequestByTokenHash(m, hash, true);
    if (!r) throw new HttpError(404, NOT_FOUND);
    if (r.state === 'answered') throw closed('answered', r.dueDate);
    if (r.state === 'expired' || r.dueDate < today()) return { kind: 'expired' as const, request: r };
    const receivedAt = await storeReply(m, r.id, checked);

    // The case write is the cases module's (case-workflow.ts). Only the newest request still
    // waiting moves the case: a late answer to an earlier letter is kept with the case but
    // does not end the wait for a later one.
    const detail = { documentRequestId: r.id, letterId: r.letterId, files: checked.length };
    await endReplyWait(m, r.caseId, 'reply-received', detail, !(await hasNewerWaitingRequest(m, r.caseId, r.id)));
    await markReplyUnread(m, r.caseId); // the examiner's flag until they open the case (issue 14)
    await recordAccess(m, audit, {
      action: 'change',
      recordType: 'document_request',
      recordId: r.id,
      taxpayerId: r.taxpayerId,
      taxpayerLabel: maskTin(r.tin),
      detail: `reply received: ${checked.length} file${checked.length === 1 ? '' : 's'}`,
    });
    return {
      kind: 'received' as const,
      receipt: {
        received: checked.map((f) => ({ fileName: f.fileName, size: f.size, sha256: f.sha256 })),
        receivedAt: receivedAt.toISOString(),
      } satisfies ReplyReceipt,
    };
  });
  if (result.kind === 'expired') {
    await markExpired(ds, result.request.id);
    throw closed('expired', result.request.dueDate);
  }
  return result.receipt;
}

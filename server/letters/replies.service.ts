/**
 * The taxpayer's side of a document request: the one-time reply link. The taxpayer has no
 * account; the link's token is the only key, found by its SHA-256 hash. The page shows
 * what is asked and by when, what came through the link so far, and nothing else about the
 * case (no TIN, no figures). Records may come in parts (issue 13): each send stores its files,
 * records a 'reply-received' case event with no actor and is acknowledged by e-mail; the link
 * takes sends until the due date or until the taxpayer says that is everything, which brings
 * a case awaiting the reply back to in review (the daily pass does so when the date passes).
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
import { acknowledgeSend } from './closing-letters.service';
import { findRequestByTokenHash, findSends, hasNewerWaitingRequest, markExpired, storeReplyPart, type RequestByToken } from './letters.repository';
import { hashReplyToken, type LetterDeps } from './letters.service';
import { checkReplyFiles, type IncomingFile } from './reply-files';

/** A token as issued: 32 random bytes in base64url. Anything else cannot be a link of ours. */
const TOKEN = /^[A-Za-z0-9_-]{43}$/;

const NOT_FOUND = 'This reply link is not known. Check that the whole link was copied from the e-mail, or contact the office.';

function closed(state: 'answered' | 'expired', dueDate: string, sends = 0): HttpError {
  if (state === 'answered' && sends > 0 && dueDate < today())
    return new HttpError(
      410,
      `The date for sending records through this link, ${longDate(dueDate)}, has passed. We received what you sent (${sends === 1 ? 'one send' : `${sends} sends`}); if you have more, please contact the office.`,
      { state },
    );
  return state === 'answered'
    ? new HttpError(410, 'This link is closed: you told us you had sent everything, and we received it. If you have more to send, please contact the office.', {
        state,
      })
    : new HttpError(410, `This link expired after its due date, ${longDate(dueDate)}. If you still want to send records, please contact the office.`, {
        state,
      });
}

/**
 * Why a request takes no more sends, or null while it is open: the taxpayer said that is
 * everything, or its due date passed (answered by date when sends came in before it,
 * expired otherwise). `expire` asks the caller to record an expiry the date already says,
 * so staff lists and the reply page agree.
 */
function whyClosed(r: RequestByToken): { error: HttpError; expire: boolean } | null {
  if (r.state === 'answered') return { error: closed('answered', r.dueDate, r.sends), expire: false };
  if (r.state !== 'expired' && r.dueDate >= today()) return null;
  if (r.sends > 0) return { error: closed('answered', r.dueDate, r.sends), expire: false };
  return { error: closed('expired', r.dueDate), expire: true };
}

/**
 * Finds the request a token opens and checks it can still take a send: records may come in
 * several sends until the due date or until the taxpayer says that is everything.
 * @throws HttpError 404 unknown token, 410 closed (everything sent, or past its due date; with `state`)
 */
export async function openRequest(ds: DataSource, token: string): Promise<RequestByToken> {
  const r = TOKEN.test(token) ? await findRequestByTokenHash(ds, hashReplyToken(token)) : null;
  if (!r) throw new HttpError(404, NOT_FOUND);
  const shut = whyClosed(r);
  if (shut) {
    if (shut.expire) await markExpired(ds, r.id);
    throw shut.error;
  }
  return r;
}

/** What the reply page shows for a usable link, with the sends so far; the visit is written to the access log. */
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
  const sends = await findSends(ds, r.id);
  return {
    state: 'open',
    taxpayerName: r.taxpayerName,
    items: r.items,
    dueDate: r.dueDate,
    received: sends.map((x) => ({ part: x.part, at: x.at.toISOString(), files: x.files })),
    office: { name: OFFICE.name, unit: OFFICE.unit, address: [...OFFICE.address], phone: OFFICE.phone, email: OFFICE.email, hours: OFFICE.hours },
    limits: { maxFiles: REPLY_MAX_FILES, maxFileBytes: REPLY_MAX_FILE_BYTES, maxTotalBytes: REPLY_MAX_TOTAL_BYTES, types: [...REPLY_FILE_TYPES] },
  };
}

/**
 * Stores one send in one transaction: its files as the next part, the case event and, when
 * the taxpayer says that is everything (`complete`) and the case awaits this request, the
 * move back to in review. A send with no files is accepted only as "that is everything"
 * after an earlier send. The request row is locked and checked again inside the transaction,
 * so two sends racing on one link get consecutive parts. The acknowledgement is written and
 * mailed afterwards (closing-letters.service.ts).
 * @throws HttpError 404, 410 as {@link openRequest}; 422 for files that fail the checks
 */
export async function receiveReply(deps: LetterDeps, audit: AuditContext, token: string, files: IncomingFile[], complete = false): Promise<ReplyReceipt> {
  const ds = deps.dataSource;
  const onlyComplete = complete && files.length === 0;
  const checked = onlyComplete ? [] : checkReplyFiles(files);
  if (!TOKEN.test(token)) throw new HttpError(404, NOT_FOUND);
  const hash = hashReplyToken(token);
  const result = await ds.transaction(async (m) => {
    const r = await findRequestByTokenHash(m, hash, true);
    if (!r) throw new HttpError(404, NOT_FOUND);
    // Closed: answered outside this transaction, so the expiry it records is kept.
    const shut = whyClosed(r);
    if (shut) return { kind: 'closed' as const, shut, request: r };
    if (onlyComplete && r.sends === 0) throw new HttpError(422, 'Choose at least one file to send.');
    const part = onlyComplete ? r.sends : r.sends + 1;
    const receivedAt = await storeReplyPart(m, r.id, part, checked, complete);

    // The case write is the cases module's (case-workflow.ts). Only "that is everything" on
    // the newest request still waiting moves the case: a part keeps it waiting for the rest,
    // and a late answer to an earlier letter does not end the wait for a later one.
    const detail = { documentRequestId: r.id, letterId: r.letterId, files: checked.length, part, complete };
    await endReplyWait(m, r.caseId, 'reply-received', detail, complete && !(await hasNewerWaitingRequest(m, r.caseId, r.id)));
    await markReplyUnread(m, r.caseId); // the examiner's flag until they open the case (issue 14)
    await recordAccess(m, audit, {
      action: 'change',
      recordType: 'document_request',
      recordId: r.id,
      taxpayerId: r.taxpayerId,
      taxpayerLabel: maskTin(r.tin),
      detail: `reply received: ${checked.length} file${checked.length === 1 ? '' : 's'}${complete ? ', everything sent' : `, send ${part}`}`,
    });
    return { kind: 'received' as const, request: r, part, receivedAt };
  });
  if (result.kind === 'closed') {
    if (result.shut.expire) await markExpired(ds, result.request.id);
    throw result.shut.error;
  }
  const r = result.request;
  const acknowledgement = await acknowledgeSend(deps, audit, {
    caseId: r.caseId,
    requestId: r.id,
    requestLetterId: r.letterId,
    email: r.email,
    part: result.part,
    receivedAt: result.receivedAt,
    files: checked.map((f) => ({ fileName: f.fileName, size: f.size })),
    complete,
    dueDate: r.dueDate,
  });
  return {
    received: checked.map((f) => ({ fileName: f.fileName, size: f.size, sha256: f.sha256 })),
    receivedAt: result.receivedAt.toISOString(),
    part: result.part,
    complete,
    dueDate: r.dueDate,
    acknowledgement,
  };
}

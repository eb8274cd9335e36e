/**
 * The letters that close the loop (issue 13): an acknowledgement of every send through a
 * reply link, the no-change letter when a case closes with no change, and the adjustment
 * proposal when it closes adjusted (the corrected figures worked out by
 * shared/returns/corrections.ts; the difference in tax becomes the case's adjusted amount).
 *
 * A closing letter is written inside the closing's transaction and mailed as its last step,
 * as every letter is (letters.service.ts): a refused send rolls the closing back. A taxpayer
 * with no e-mail address anywhere on the case still gets the letter, kept for post, so the
 * office can always close. The acknowledgement is the exception: it is written after the
 * reply has been stored, in its own transaction, because a mail server that is down must not
 * turn away records a taxpayer has just sent; the reply page is then their receipt.
 */
import { randomUUID } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import { CASE_STATE_LABELS, type TransitionRequest } from '../../shared/cases';
import { addDays, flaggedLetterWords, PROPOSAL_ANSWER_DAYS, type LetterKind, type LetterPreview } from '../../shared/letters';
import { applyCorrections, type CorrectedReturn } from '../../shared/returns/corrections';
import { LINE_CODE_DEFS, type CentsLine, type LineCode } from '../../shared/returns/line-codes';
import { formatCents } from '../../shared/returns/money';
import { recordAccess } from '../access-log/access-log.service';
import type { AuditContext, StaffAudit } from '../access-log/audit-context';
import { assertMayAct, lockCase, moveCase } from '../cases/case-workflow';
import type { ExamCase } from '../cases/exam-case.entity';
import { today as clockToday } from '../clock';
import { HttpError } from '../http/errors';
import {
  caseHasReplyFiles,
  findCaseContext,
  findFiledLines,
  findTaxpayerAddress,
  insertLetter,
  replaceCorrections,
  setLetterMessageId,
  type CaseContext,
} from './letters.repository';
import { logLetterPreview, sha256, type LetterDeps } from './letters.service';
import {
  acknowledgementText,
  acknowledgementWording,
  closingLetterMail,
  DEFAULT_PROPOSAL_RIGHTS,
  noChangeText,
  noChangeWording,
  proposalText,
  proposalWording,
  renderAcknowledgementPdf,
  renderAdjustmentProposalPdf,
  renderNoChangePdf,
  type AcknowledgementLetter,
} from './pdf/closing-letters-pdf';

/** Reads PROPOSAL_RIGHTS_TEXT, the office's wording of the taxpayer's rights in a proposal; the neutral default when unset. */
export function proposalRights(env: Record<string, string | undefined> = process.env): string {
  const raw = env.PROPOSAL_RIGHTS_TEXT?.trim();
  if (!raw) return DEFAULT_PROPOSAL_RIGHTS;
  // The setting is letter text like any other: the same words stay out of it.
  const flagged = flaggedLetterWords(raw);
  if (flagged.length)
    throw new HttpError(500, `The setting PROPOSAL_RIGHTS_TEXT uses words letters never carry (${flagged.join(', ')}); an administrator must reword it.`);
  return raw.replace(/[\u0000-\u0009\u000b-\u001f\u007f]/g, '');
}

/** "CL-3F2A9C1B": the reference a closing letter carries. */
const referenceOf = (prefix: string, letterId: string) => `${prefix}-${letterId.slice(0, 8).toUpperCase()}`;

/** What the closing of a case writes: the letter's words and PDF, and (adjusted) the figures. */
interface ClosingLetter {
  kind: Extract<LetterKind, 'no_change' | 'adjustment_proposal'>;
  reference: string;
  subject: string;
  text: string[];
  render(): Promise<Buffer>;
  fileName: string;
  figures: CorrectedReturn | null;
}

function isLineCode(code: string): code is LineCode {
  return code in LINE_CODE_DEFS;
}

/** The return as filed and corrected, or 422 when the corrections change nothing in the tax. */
async function correctedFigures(db: DataSource | EntityManager, caseId: string, req: TransitionRequest): Promise<CorrectedReturn> {
  const lines: CentsLine[] = (await findFiledLines(db, caseId)).flatMap((l) => (isLineCode(l.code) ? [{ code: l.code, cents: l.cents }] : []));
  const figures = applyCorrections(lines, req.corrections ?? []);
  if (figures.taxDifference === 0) {
    const message = `The corrected figures give the same tax as filed (${formatCents(figures.filed.tax)}). Close with no change instead, or check the corrected amounts.`;
    throw new HttpError(422, message, { issues: [{ path: 'corrections', message }] });
  }
  return figures;
}

async function closingLetter(
  db: DataSource | EntityManager,
  ctx: CaseContext,
  req: TransitionRequest,
  signedBy: string,
  ref: (prefix: string) => string,
  date: string,
): Promise<ClosingLetter> {
  const base = { date, taxpayerName: ctx.taxpayerName, postalAddress: ctx.postalAddress, taxYear: ctx.taxYear, returnRef: ctx.returnRef, signedBy };
  if (req.to === 'closed_adjusted') {
    const figures = await correctedFigures(db, ctx.id, req);
    const reference = ref('AP');
    const l = { ...base, reference, figures, answerBy: addDays(date, PROPOSAL_ANSWER_DAYS), rights: proposalRights() };
    return {
      kind: 'adjustment_proposal',
      reference,
      subject: proposalWording.subject(l),
      text: proposalText(l),
      render: () => renderAdjustmentProposalPdf(l),
      fileName: `adjustment-proposal-${reference}.pdf`,
      figures,
    };
  }
  const reference = ref('NC');
  const l = { ...base, reference, recordsReceived: await caseHasReplyFiles(db, ctx.id) };
  return {
    kind: 'no_change',
    reference,
    subject: noChangeWording.subject(l),
    text: noChangeText(l),
    render: () => renderNoChangePdf(l),
    fileName: `no-change-${reference}.pdf`,
    figures: null,
  };
}

/** True for the closings that write to the taxpayer. */
export function isClosingMove(to: TransitionRequest['to']): to is 'closed_no_change' | 'closed_adjusted' {
  return to === 'closed_no_change' || to === 'closed_adjusted';
}

/** How a letter kept for post names its recipient. */
const BY_POST = 'By post (no e-mail address on file)';

/**
 * Closes a case with no change or adjusted, inside the caller's transaction with the case
 * locked: moves it (the adjusted amount is the difference in tax the corrections make),
 * keeps the corrections and the letter, and mails the letter as the last step.
 * @throws HttpError 422 corrections that change no tax, 409 a move the workflow refuses, 502 mail refused
 */
export async function closeWithLetter(m: EntityManager, deps: LetterDeps, audit: StaffAudit, locked: ExamCase, req: TransitionRequest): Promise<ExamCase> {
  if (!isClosingMove(req.to)) throw new Error(`closeWithLetter called for ${req.to}`);
  const ctx = await findCaseContext(m, locked.id);
  if (!ctx) throw new HttpError(404, 'No such case.');
  const letterId = randomUUID();
  const date = clockToday();
  const letter = await closingLetter(m, ctx, req, audit.actor.displayName, (prefix) => referenceOf(prefix, letterId), date);
  const adjustedAmount = letter.figures ? formatCents(letter.figures.taxDifference) : undefined;
  const corrections = letter.figures
    ? letter.figures.lines.filter((x) => x.changed).map((x) => ({ lineCode: x.code, filed: formatCents(x.filed), corrected: formatCents(x.corrected) }))
    : [];
  const moved = await moveCase(m, audit, locked, req.to, {
    outcome: req.outcome,
    adjustedAmount,
    detail: { letterId, ...(corrections.length ? { corrections } : {}) },
  });
  await replaceCorrections(m, locked.id, audit.actor.id, corrections);
  const to = await findTaxpayerAddress(m, locked.id);
  const pdf = await letter.render();
  const hash = sha256(pdf);
  await insertLetter(m, {
    id: letterId,
    caseId: locked.id,
    kind: letter.kind,
    fileName: letter.fileName,
    pdf,
    sha256: hash,
    sentSha256: to ? hash : null,
    recipient: to ?? BY_POST,
    subject: letter.subject,
    messageId: null,
    createdBy: audit.actor.id,
  });
  if (to) {
    // Last step of the transaction: a refused send rolls the closing back.
    const mail = closingLetterMail(
      { taxpayerName: ctx.taxpayerName, reference: letter.reference },
      letter.subject,
      letter.text,
      audit.actor.displayName,
      to,
      pdf,
      letter.fileName,
    );
    let info: { messageId?: string };
    try {
      info = await deps.mailer.transport.sendMail({ ...mail, from: deps.mailer.from });
    } catch (e) {
      console.error(`[letters] sending ${letter.kind} ${letter.reference} failed:`, e instanceof Error ? e.message : String(e));
      throw new HttpError(
        502,
        'The closing letter could not be sent: the mail server did not accept it. Nothing was saved and the case has not moved. Please try again in a few minutes.',
      );
    }
    await setLetterMessageId(m, letterId, info.messageId ?? null);
  }
  return moved;
}

/**
 * The closing letter as it would be sent, for the examiner to read before closing; nothing
 * is stored or sent. Reading the address on file is logged as a view.
 * @throws HttpError 404, 403, 409 (the case cannot close from its state), 422 as {@link closeWithLetter}
 */
export async function previewClosingLetter(ds: DataSource, audit: StaffAudit, caseId: string, req: TransitionRequest): Promise<LetterPreview> {
  if (!isClosingMove(req.to))
    throw new HttpError(422, 'Only a closing (no change or adjusted) writes a closing letter.', {
      issues: [{ path: 'to', message: 'Choose closed_no_change or closed_adjusted' }],
    });
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(audit.actor, c);
    if (!['in_review', 'awaiting_reply'].includes(c.state))
      throw new HttpError(409, `A case is closed from review or while awaiting a reply; this case is ${CASE_STATE_LABELS[c.state].toLowerCase()}.`);
    const ctx = (await findCaseContext(m, caseId))!;
    // The reference is given when the letter is sent.
    const letter = await closingLetter(m, ctx, req, audit.actor.displayName, (prefix) => `${prefix}-(given on sending)`, clockToday());
    const to = await findTaxpayerAddress(m, caseId);
    await logLetterPreview(m, audit, ctx, letter.kind);
    return {
      kind: letter.kind,
      to,
      subject: letter.subject,
      text: [`Dear ${ctx.taxpayerName},`, '', ...letter.text, '', 'Yours sincerely,', audit.actor.displayName].join('\n'),
    };
  });
}

/** One send through a reply link, as the acknowledgement needs it. */
export interface ReceivedSend {
  caseId: string;
  requestId: string;
  requestLetterId: string;
  email: string;
  part: number;
  receivedAt: Date;
  files: { fileName: string; size: number }[];
  complete: boolean;
  dueDate: string;
}

/**
 * Writes and mails the acknowledgement of one send (its own transaction, after the reply is
 * stored). Answers 'not-mailed' when the mail server refused it (nothing kept then).
 */
export async function acknowledgeSend(deps: LetterDeps, audit: AuditContext, s: ReceivedSend): Promise<'mailed' | 'not-mailed'> {
  const letterId = randomUUID();
  try {
    await deps.dataSource.transaction(async (m) => {
      const ctx = await findCaseContext(m, s.caseId);
      if (!ctx) throw new Error('case gone');
      const reference = referenceOf('RA', letterId);
      const l: AcknowledgementLetter = {
        reference,
        date: clockToday(),
        taxpayerName: ctx.taxpayerName,
        postalAddress: ctx.postalAddress,
        taxYear: ctx.taxYear,
        returnRef: ctx.returnRef,
        requestReference: referenceOf('DR', s.requestLetterId),
        receivedAt: s.receivedAt.toISOString(),
        part: s.part,
        files: s.files,
        complete: s.complete,
        dueDate: s.dueDate,
      };
      const pdf = await renderAcknowledgementPdf(l);
      const hash = sha256(pdf);
      const fileName = `records-received-${reference}.pdf`;
      const subject = acknowledgementWording.subject(l);
      await insertLetter(m, {
        id: letterId,
        caseId: s.caseId,
        kind: 'acknowledgement',
        fileName,
        pdf,
        sha256: hash,
        sentSha256: hash,
        recipient: s.email,
        subject,
        messageId: null,
        createdBy: null,
      });
      await recordAccess(m, audit, {
        action: 'change',
        recordType: 'letter',
        recordId: letterId,
        taxpayerId: ctx.taxpayerId,
        taxpayerLabel: maskTin(ctx.tin),
        detail: `acknowledgement of send ${s.part}`,
      });
      const mail = closingLetterMail(l, subject, acknowledgementText(l), null, s.email, pdf, fileName);
      const info = await deps.mailer.transport.sendMail({ ...mail, from: deps.mailer.from });
      await setLetterMessageId(m, letterId, info.messageId ?? null);
    });
    return 'mailed';
  } catch (e) {
    console.error(`[letters] acknowledgement for request ${s.requestId} not sent:`, e instanceof Error ? e.message : String(e));
    return 'not-mailed';
  }
}

/**
 * Letters API, for staff (issue 7):
 *  - `POST /api/cases/:id/document-requests` {items, dueDate, email?} (workCases, the case's
 *    examiner or a supervisor; case in review) → 201 {letter, caseState: 'awaiting_reply',
 *    warnings: [{item, words}]} (items with flagged words, sent all the same);
 *    422 invalid input or no e-mail address, 409 wrong state, 502 mail server refused;
 *  - `POST /api/cases/:id/referral` {unit?, summary} (workCases; in review or awaiting
 *    reply) → 201 {letter, caseState: 'referred'};
 *  - `GET /api/cases/:id/letter-context` (workCases) → {today, emailOnFile, earliestDueDate,
 *    latestDueDate}: what the request form shows before Send (issue 14);
 *  - `POST /api/cases/:id/document-requests/preview` (same body as sending) and
 *    `POST /api/cases/:id/closing-letter/preview` (a closing transition's body) and
 *    `POST /api/cases/:id/referral/preview` (a referral's body) → {kind, to,
 *    subject, text}: the letter as it would go, nothing stored or sent;
 *  - `GET /api/cases/:id/letters` (readCases) → {items: [letter]};
 *  - `GET /api/cases/:id/letters/:letterId/pdf` (readCases) → the PDF (office copy);
 *  - `GET /api/cases/:id/reply-uploads/:uploadId` (readCases) → a file the taxpayer sent.
 * Every read is written to the access log as a view; every change by the case workflow.
 */
import type { Response } from 'express';
import { TransitionRequestSchema } from '../../shared/cases';
import { documentRequestInputSchema, letterItemWarnings, ReferralInputSchema } from '../../shared/letters';
import { today as officeToday } from '../clock';
import { previewClosingLetter } from './closing-letters.service';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import {
  letterContext,
  letterPdf,
  listLetters,
  previewDocumentRequest,
  previewReferralMemo,
  referCase,
  replyUploadFile,
  sendDocumentRequest,
  type LetterDeps,
} from './letters.service';

/** Sends stored bytes with headers that keep them out of shared caches and unsniffed. */
function sendFile(res: Response, contentType: string, fileName: string, bytes: Buffer, disposition: 'inline' | 'attachment'): void {
  const ascii = fileName.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_');
  res.setHeader('Content-Type', contentType);
  res.setHeader('Content-Length', String(bytes.length));
  res.setHeader('Content-Disposition', `${disposition}; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(fileName)}`);
  res.setHeader('Cache-Control', 'private, no-store');
  res.setHeader('X-Content-Type-Options', 'nosniff');
  res.end(bytes);
}

/** The staff letter routes. */
export function letterRoutes(deps: LetterDeps) {
  const r = secureRouter();
  const ld = deps;

  // The due-date window is checked against the office clock, as the form does (issue 14).
  const requestSchema = documentRequestInputSchema(officeToday);

  r.get('/cases/:id/letter-context', allow('workCases'), async (req, res) => {
    res.setHeader('Cache-Control', 'private, no-store');
    res.json(await letterContext(deps.dataSource, staffAuditOf(req), String(req.params.id)));
  });

  r.post('/cases/:id/document-requests/preview', allow('workCases'), validate(requestSchema), async (req, res) => {
    res.setHeader('Cache-Control', 'private, no-store');
    res.json(await previewDocumentRequest(ld, staffAuditOf(req), String(req.params.id), req.body));
  });

  r.post('/cases/:id/closing-letter/preview', allow('workCases'), validate(TransitionRequestSchema), async (req, res) => {
    res.setHeader('Cache-Control', 'private, no-store');
    res.json(await previewClosingLetter(deps.dataSource, staffAuditOf(req), String(req.params.id), req.body));
  });

  r.post('/cases/:id/document-requests', allow('workCases'), validate(requestSchema), async (req, res) => {
    const id = String(req.params.id);
    const created = await sendDocumentRequest(ld, staffAuditOf(req), id, req.body);
    // A soft check: the examiner's own words go out as typed; the answer names the flagged ones.
    res.status(201).json({ ...created, warnings: letterItemWarnings(req.body.items) });
  });

  r.post('/cases/:id/referral/preview', allow('workCases'), validate(ReferralInputSchema), async (req, res) => {
    res.setHeader('Cache-Control', 'private, no-store');
    res.json(await previewReferralMemo(ld, staffAuditOf(req), String(req.params.id), req.body));
  });

  r.post('/cases/:id/referral', allow('workCases'), validate(ReferralInputSchema), async (req, res) => {
    const id = String(req.params.id);
    res.status(201).json(await referCase(ld, staffAuditOf(req), id, req.body));
  });

  r.get('/cases/:id/letters', allow('readCases'), async (req, res) => {
    const id = String(req.params.id);
    res.setHeader('Cache-Control', 'private, no-store');
    res.json(await listLetters(deps.dataSource, staffAuditOf(req), id));
  });

  r.get('/cases/:id/letters/:letterId/pdf', allow('readCases'), async (req, res) => {
    const id = String(req.params.id);
    const letterId = String(req.params.letterId);
    const l = await letterPdf(deps.dataSource, staffAuditOf(req), id, letterId);
    sendFile(res, 'application/pdf', l.fileName, l.pdf, 'inline');
  });

  r.get('/cases/:id/reply-uploads/:uploadId', allow('readCases'), async (req, res) => {
    const id = String(req.params.id);
    const uploadId = String(req.params.uploadId);
    const u = await replyUploadFile(deps.dataSource, staffAuditOf(req), id, uploadId);
    // A download, never shown inline: the bytes came from outside the office.
    sendFile(res, u.contentType, u.fileName, u.content, 'attachment');
  });

  return r;
}

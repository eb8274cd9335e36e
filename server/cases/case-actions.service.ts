/**
 * What an examiner or supervisor does to a case (issue 7): claim, assign (one or a
 * selection), move, note, reveal the full TIN. Changes go through case-workflow.ts (which
 * locks the case, checks the move, writes the case event and the access-log line in one
 * transaction); each change drops the cached queue totals.
 */
import type { DataSource } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import { MOVES_ELSEWHERE, type BulkReassign, type BulkReassignResult, type CaseChanged, type CaseNoteDto } from '../../shared/case-api';
import { CASE_TRANSITIONS, type TransitionRequest } from '../../shared/cases';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { HttpError } from '../http/errors';
import { closeWithLetter, isClosingMove } from '../letters/closing-letters.service';
import type { LetterDeps } from '../letters/letters.service';
import { findCaseTin, findExaminers, insertCaseNote } from './case.repository';
import { dropQueueTotals } from './case-queue.service';
import { assertMayAct, assignCase, claimCase, lockCase, logCaseAccess, moveCase, reopenCase } from './case-workflow';
import type { ExamCase } from './exam-case.entity';

const changed = (c: ExamCase): CaseChanged => ({ id: c.id, state: c.state, assignee: c.assigneeId });

/** An examiner (or supervisor) takes an open case. */
export async function claim(ds: DataSource, audit: StaffAudit, caseId: string): Promise<CaseChanged> {
  const c = await claimCase(ds, audit, caseId);
  dropQueueTotals(ds);
  return changed(c);
}

/** A supervisor gives a case to an examiner (reassignment kept in the history). */
export async function assign(ds: DataSource, audit: StaffAudit, caseId: string, assigneeId: string): Promise<CaseChanged> {
  const c = await assignCase(ds, audit, caseId, assigneeId);
  dropQueueTotals(ds);
  return changed(c);
}

/**
 * Moves a case. Moves that belong to another action (claiming, a document request, a
 * referral memo) are refused with 409 naming that action; the rest are checked by
 * moveCase against the workflow (409 naming the allowed moves). A closing with no change or
 * adjusted writes and mails its letter in the same transaction when `letters` is given
 * (server/letters/closing-letters.service.ts; the adjusted amount comes from the corrections).
 */
export async function transition(ds: DataSource, audit: StaffAudit, caseId: string, req: TransitionRequest, letters?: LetterDeps): Promise<CaseChanged> {
  const moved = await ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(audit.actor, c);
    const elsewhere = MOVES_ELSEWHERE[req.to];
    if (elsewhere && CASE_TRANSITIONS[c.state].includes(req.to)) throw new HttpError(409, elsewhere);
    if (letters && isClosingMove(req.to)) return closeWithLetter(m, letters, audit, c, req);
    return moveCase(m, audit, c, req.to, { outcome: req.outcome });
  });
  dropQueueTotals(ds);
  return changed(moved);
}

/** Appends a note (the caller must be able to act on the case); logged as a change. */
export async function addNote(ds: DataSource, audit: StaffAudit, caseId: string, text: string): Promise<CaseNoteDto> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(audit.actor, c);
    const n = await insertCaseNote(m, caseId, audit.actor.id, text);
    await logCaseAccess(m, audit, c, 'change', `note ${n.id} added`);
    return { id: n.id, at: n.at.toISOString(), authorId: n.authorId, authorName: n.authorName, text: n.text };
  });
}

/**
 * The full TIN, for whoever may act on the case (need-to-know: reading the queue does not
 * need it), logged as 'reveal-tin'.
 */
export async function revealTin(ds: DataSource, audit: StaffAudit, caseId: string): Promise<{ tin: string }> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(audit.actor, c);
    const t = await findCaseTin(m, caseId);
    if (!t) throw new HttpError(404, 'No such case.');
    await recordAccess(m, audit, { action: 'reveal-tin', recordType: 'case', recordId: caseId, taxpayerId: t.taxpayerId, taxpayerLabel: maskTin(t.tin) });
    return { tin: String(t.tin) };
  });
}

/**
 * A supervisor moves a selection of cases to one examiner. Each case is its own
 * transaction (assignCase), so one case that changed meanwhile does not hold the others
 * back; refusals come back with their reason.
 */
export async function bulkReassign(ds: DataSource, audit: StaffAudit, input: BulkReassign): Promise<BulkReassignResult> {
  const examiners = await findExaminers(ds);
  if (!examiners.some((e) => e.id === input.assigneeId)) throw new HttpError(422, 'Assign cases to an active examiner.');
  const result: BulkReassignResult = { moved: [], refused: [] };
  for (const id of [...new Set(input.caseIds)]) {
    try {
      // The audit context is this route's (POST /api/cases/reassign), not the per-case one.
      await assignCase(ds, audit, id, input.assigneeId);
      result.moved.push(id);
    } catch (e) {
      if (!(e instanceof HttpError)) throw e;
      result.refused.push({ id, reason: e.message });
    }
  }
  dropQueueTotals(ds);
  return result;
}

/** A supervisor reopens a finished case with a reason (case-workflow.ts reopenCase). */
export async function reopen(ds: DataSource, audit: StaffAudit, caseId: string, reason: string): Promise<CaseChanged> {
  const c = await reopenCase(ds, audit, caseId, reason);
  dropQueueTotals(ds);
  return changed(c);
}

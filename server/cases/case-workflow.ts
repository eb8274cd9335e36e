/**
 * The case workflow: claim, assign, move between states. Every change locks the case row,
 * checks the move against shared/cases.ts, records a case_event and an access-log line in
 * the same transaction. Letters and memos (server/letters) call {@link moveCase} too; the
 * taxpayer's reply and the daily pass's overdue requests call {@link endReplyWait}.
 */
import type { DataSource, EntityManager } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import { canTransition, CASE_STATE_LABELS, CASE_TRANSITIONS, isFinalState, REOPEN_STATE, type CaseState } from '../../shared/cases';
import { can } from '../../shared/permissions';
import { isUuid } from '../../shared/ids';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import type { SessionUser } from '../auth/access';
import type { Db } from '../db/db';
import { HttpError } from '../http/errors';
import { findAssignee, findTaxpayerTin, insertCaseEvent, lockCaseRow, saveCase } from './case.repository';
import type { ExamCase } from './exam-case.entity';
import { now as officeNow } from '../clock';

/** Loads a case FOR UPDATE inside a transaction, or 404. */
export async function lockCase(m: EntityManager, caseId: string): Promise<ExamCase> {
  if (!isUuid(caseId)) throw new HttpError(404, 'No such case.');
  const c = await lockCaseRow(m, caseId);
  if (!c) throw new HttpError(404, 'No such case.');
  return c;
}

/** The taxpayer label (masked TIN) for access-log lines about a case. */
export async function taxpayerLabelOf(db: Db, taxpayerId: string): Promise<string | null> {
  const tin = await findTaxpayerTin(db, taxpayerId);
  return tin === null ? null : maskTin(tin);
}

/**
 * Need-to-know for actions on one case: a supervisor may act on any case; an examiner only
 * on a case assigned to them. The one statement of the rule: the case screen's actions and
 * every check use it.
 */
export function mayAct(actor: Pick<SessionUser, 'id' | 'role'>, assigneeId: string | null): boolean {
  return actor.role === 'supervisor' || (actor.role === 'examiner' && assigneeId === actor.id);
}

/** Refuses (403) an actor who may not act on the case, saying why. */
export function assertMayAct(actor: Pick<SessionUser, 'id' | 'role'>, c: Pick<ExamCase, 'assigneeId'>): void {
  if (mayAct(actor, c.assigneeId)) return;
  throw new HttpError(403, c.assigneeId ? 'This case is assigned to another examiner.' : 'Claim this case before working on it.');
}

/**
 * Ends a case's wait for a taxpayer's reply, inside the caller's transaction: the reply came
 * in through the link ('reply-received', server/letters/replies.service.ts) or its date passed
 * without one ('reply-overdue', the daily pass). Nobody signed in acts, so the event has no
 * actor. When the case awaits this request (`endsWait`: no other request is still waiting),
 * it moves back to in review, the move the workflow allows, and its reply due date is
 * cleared; otherwise (the case moved on, or waits on another letter) only the event is kept.
 * @param caseOrId the case already locked in this transaction ({@link lockCase}), or its id
 * @returns true when the case moved back to in review
 */
export async function endReplyWait(
  m: EntityManager,
  caseOrId: ExamCase | string,
  kind: 'reply-received' | 'reply-overdue',
  detail: Record<string, unknown>,
  endsWait: boolean,
  at: Date = officeNow(),
): Promise<boolean> {
  const c = typeof caseOrId === 'string' ? await lockCase(m, caseOrId) : caseOrId;
  if (!(endsWait && c.state === 'awaiting_reply' && canTransition(c.state, 'in_review'))) {
    await addCaseEvent(m, c.id, null, kind, detail);
    return false;
  }
  c.state = 'in_review';
  c.updatedAt = at;
  c.dueDate = null;
  await saveCase(m, c);
  await addCaseEvent(m, c.id, null, kind, detail, 'awaiting_reply', 'in_review');
  return true;
}

/** Appends a case event (actor null: Plumbline itself, or a taxpayer through a reply link). */
export async function addCaseEvent(
  m: EntityManager,
  caseId: string,
  actor: Pick<SessionUser, 'id'> | null,
  kind: string,
  detail: Record<string, unknown> = {},
  from?: CaseState,
  to?: CaseState,
): Promise<void> {
  await insertCaseEvent(m, { caseId, actorId: actor?.id ?? null, kind, detail, from: from ?? null, to: to ?? null });
}

/**
 * One access-log line about a case, inside the caller's transaction, naming its taxpayer so
 * "who touched this taxpayer" finds it. Every case change (moves here, notes) logs through it.
 */
export async function logCaseAccess(
  m: EntityManager,
  audit: StaffAudit,
  c: Pick<ExamCase, 'id' | 'taxpayerId'>,
  action: 'change' | 'view' | 'export',
  detail: string,
): Promise<void> {
  await recordAccess(m, audit, {
    action,
    recordType: 'case',
    recordId: c.id,
    taxpayerId: c.taxpayerId,
    taxpayerLabel: await taxpayerLabelOf(m, c.taxpayerId),
    detail,
  });
}

/** Extra facts a move may record. */
export interface MoveOptions {
  outcome?: string;
  adjustedAmount?: string;
  /** Case-event kind (default 'transition'); letters use 'document-request', memos 'referral'. */
  kind?: string;
  detail?: Record<string, unknown>;
  dueDate?: string | null;
}

/**
 * Moves a case to another state inside the caller's transaction. Refuses (409) a move the
 * workflow does not allow, naming the allowed ones. A caller that has already locked the
 * case in this transaction ({@link lockCase}) passes it, so it is not loaded again.
 */
export async function moveCase(m: EntityManager, audit: StaffAudit, caseOrId: ExamCase | string, to: CaseState, opts: MoveOptions = {}): Promise<ExamCase> {
  const c = typeof caseOrId === 'string' ? await lockCase(m, caseOrId) : caseOrId;
  assertMayAct(audit.actor, c);
  if (!canTransition(c.state, to)) {
    const allowed = CASE_TRANSITIONS[c.state].map((s) => CASE_STATE_LABELS[s].toLowerCase());
    throw new HttpError(
      409,
      `A case that is ${CASE_STATE_LABELS[c.state].toLowerCase()} cannot move to ${CASE_STATE_LABELS[to].toLowerCase()}. ` +
        (allowed.length ? `From here it can move to: ${allowed.join(', ')}.` : 'It is finished; nothing more can change.'),
    );
  }
  if (to === 'open' && c.state === 'assigned') c.assigneeId = null;
  const from = c.state;
  c.state = to;
  c.updatedAt = officeNow();
  if (opts.dueDate !== undefined) c.dueDate = opts.dueDate;
  if (isFinalState(to)) {
    c.closedAt = officeNow();
    c.outcome = opts.outcome ?? null;
    c.adjustedAmount = to === 'closed_adjusted' ? (opts.adjustedAmount ?? null) : null;
  }
  await saveCase(m, c);
  await addCaseEvent(
    m,
    c.id,
    audit.actor,
    opts.kind ?? 'transition',
    { ...(opts.detail ?? {}), ...(opts.outcome ? { outcome: opts.outcome } : {}), ...(opts.adjustedAmount ? { adjustedAmount: opts.adjustedAmount } : {}) },
    from,
    to,
  );
  await logCaseAccess(m, audit, c, 'change', `${from} → ${to}`);
  return c;
}

/** An examiner takes an open case. */
export async function claimCase(ds: DataSource, audit: StaffAudit, caseId: string): Promise<ExamCase> {
  const actor = audit.actor;
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    if (c.state !== 'open') {
      throw new HttpError(
        409,
        c.assigneeId === actor.id
          ? 'You already hold this case.'
          : `Only an open case can be claimed; this one is ${CASE_STATE_LABELS[c.state].toLowerCase()}.`,
      );
    }
    c.state = 'assigned';
    c.assigneeId = actor.id;
    c.updatedAt = officeNow();
    await saveCase(m, c);
    await addCaseEvent(m, c.id, actor, 'claimed', { assigneeId: actor.id }, 'open', 'assigned');
    await logCaseAccess(m, audit, c, 'change', 'claimed');
    return c;
  });
}

/**
 * A supervisor gives a case that is not finished to an examiner (history kept as events).
 * An open case becomes assigned; a case already being worked keeps its state, letters and
 * reply links (they belong to the case, not to the examiner): a hand-over for leave or a
 * departure (issue 13), recorded as 'handed-over' with who had it and who has it now.
 */
export async function assignCase(ds: DataSource, audit: StaffAudit, caseId: string, assigneeId: string): Promise<ExamCase> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    if (isFinalState(c.state)) {
      throw new HttpError(409, `A finished case cannot be given to an examiner; this one is ${CASE_STATE_LABELS[c.state].toLowerCase()}.`);
    }
    const who = await findAssignee(m, assigneeId);
    if (!who || !who.active || who.role !== 'examiner') throw new HttpError(422, 'Assign cases to an active examiner.');
    if (c.assigneeId === assigneeId) throw new HttpError(409, `The case is already with ${who.displayName}.`);
    const from = c.state;
    const previous = c.assigneeId;
    // Only an open case changes state; work in progress stays where it is.
    const to: CaseState = from === 'open' ? 'assigned' : from;
    c.state = to;
    c.assigneeId = assigneeId;
    c.updatedAt = officeNow();
    await saveCase(m, c);
    const kind = !previous ? 'assigned' : from === 'open' || from === 'assigned' ? 'reassigned' : 'handed-over';
    await addCaseEvent(m, c.id, audit.actor, kind, { from: previous, to: assigneeId }, from, to);
    await logCaseAccess(m, audit, c, 'change', `assigned to ${who.displayName}`);
    return c;
  });
}

/**
 * A supervisor reopens a finished case (issue 14; shared/cases.ts REOPEN_STATE): it goes back
 * in review with the same examiner, its outcome and finish time are cleared from the case row
 * but kept in the history (the 'reopened' event holds the reason, the state it left and the
 * outcome it had), and the access log records the reopen with its reason. Refuses (409) a
 * case that is not finished. Only the policy table's `reopenCases` reaches this (the route's
 * rule); the actor check here holds the same rule for any other caller.
 */
export async function reopenCase(ds: DataSource, audit: StaffAudit, caseId: string, reason: string): Promise<ExamCase> {
  if (!can(audit.actor.role, 'reopenCases')) throw new HttpError(403, 'Only a supervisor can reopen a finished case.');
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    if (!isFinalState(c.state)) {
      throw new HttpError(409, `Only a finished case can be reopened; this one is ${CASE_STATE_LABELS[c.state].toLowerCase()}.`);
    }
    const from = c.state;
    const detail = { reason, outcome: c.outcome, adjustedAmount: c.adjustedAmount, closedAt: c.closedAt?.toISOString() ?? null };
    c.state = REOPEN_STATE;
    c.closedAt = null;
    c.outcome = null;
    c.adjustedAmount = null;
    c.updatedAt = officeNow();
    await saveCase(m, c);
    await addCaseEvent(m, c.id, audit.actor, 'reopened', detail, from, REOPEN_STATE);
    await logCaseAccess(m, audit, c, 'change', `reopened: ${from} → ${REOPEN_STATE}; reason: ${reason}`);
    return c;
  });
}

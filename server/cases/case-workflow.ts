/**
 * The case workflow: claim, assign, move between states. Every change locks the case row,
 * checks the move against shared/cases.ts, records a case_event and an access-log line in
 * the same transaction. Letters and memos (server/letters) call {@link moveCase} too; the
 * taxpayer's reply (server/letters/replies.service.ts) calls {@link recordReply}.
 */
import type { DataSource, EntityManager } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import { canTransition, CASE_STATE_LABELS, CASE_TRANSITIONS, isFinalState, type CaseState } from '../../shared/cases';
import { isUuid } from '../../shared/ids';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import type { SessionUser } from '../auth/access';
import type { Db } from '../db/db';
import { HttpError } from '../http/errors';
import { findAssignee, findTaxpayerTin, insertCaseEvent, lockCaseRow, saveCase } from './case.repository';
import type { ExamCase } from './exam-case.entity';

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
 * Keeps a taxpayer's reply with its case, inside the caller's transaction. The taxpayer is
 * not a session user, so the event has no actor. When the case awaits this reply
 * (`endsWait`: no newer request is still waiting), it moves back to in review, the move
 * the workflow allows, and its reply due date is met; otherwise (the case moved on, or waits
 * on a newer letter) the reply is kept and the state left alone.
 */
export async function recordReply(m: EntityManager, caseId: string, detail: Record<string, unknown>, endsWait: boolean): Promise<void> {
  const c = await lockCase(m, caseId);
  if (endsWait && c.state === 'awaiting_reply' && canTransition(c.state, 'in_review')) {
    c.state = 'in_review';
    c.updatedAt = new Date();
    c.dueDate = null;
    await saveCase(m, c);
    await addCaseEvent(m, c.id, null, 'reply-received', detail, 'awaiting_reply', 'in_review');
  } else {
    await addCaseEvent(m, c.id, null, 'reply-received', detail);
  }
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

async function logChange(m: EntityManager, audit: StaffAudit, c: ExamCase, detail: string) {
  await recordAccess(m, audit, {
    action: 'change',
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
 * workflow does not allow, naming the allowed ones.
 */
export async function moveCase(m: EntityManager, audit: StaffAudit, caseId: string, to: CaseState, opts: MoveOptions = {}): Promise<ExamCase> {
  const c = await lockCase(m, caseId);
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
  c.updatedAt = new Date();
  if (opts.dueDate !== undefined) c.dueDate = opts.dueDate;
  if (isFinalState(to)) {
    c.closedAt = new Date();
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
  await logChange(m, audit, c, `${from} → ${to}`);
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
    c.updatedAt = new Date();
    await saveCase(m, c);
    await addCaseEvent(m, c.id, actor, 'claimed', { assigneeId: actor.id }, 'open', 'assigned');
    await logChange(m, audit, c, 'claimed');
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
    c.updatedAt = new Date();
    await saveCase(m, c);
    const kind = !previous ? 'assigned' : from === 'open' || from === 'assigned' ? 'reassigned' : 'handed-over';
    await addCaseEvent(m, c.id, audit.actor, kind, { from: previous, to: assigneeId }, from, to);
    await logChange(m, audit, c, `assigned to ${who.displayName}`);
    return c;
  });
}

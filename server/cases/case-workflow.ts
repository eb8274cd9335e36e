/**
 * The case workflow: claim, assign, move between states. Every change locks the case row,
 * checks the move against shared/cases.ts, records a case_event and an access-log line in
 * the same transaction. Letters and memos (server/letters) call {@link moveCase} too.
 */
import type { DataSource, EntityManager } from 'typeorm';
import { canTransition, CASE_STATE_LABELS, CASE_TRANSITIONS, type CaseState } from '../../shared/cases';
import { maskTin } from '../../shared/access-log';
import { recordAccess } from '../access-log/access-log.service';
import type { SessionUser } from '../auth/access';
import { HttpError } from '../http/errors';
import { ExamCase } from './exam-case.entity';
import { isUuid } from '../../shared/ids';


/** Loads a case FOR UPDATE inside a transaction, or 404. */
export async function lockCase(m: EntityManager, caseId: string): Promise<ExamCase> {
  if (!isUuid(caseId)) throw new HttpError(404, 'No such case.');
  const c = await m.getRepository(ExamCase).createQueryBuilder('c').setLock('pessimistic_write').where('c.id = :id', { id: caseId }).getOne();
  if (!c) throw new HttpError(404, 'No such case.');
  return c;
}

/** The taxpayer label (masked TIN) for access-log lines about a case. */
export async function taxpayerLabelOf(m: EntityManager | DataSource, taxpayerId: string): Promise<string | null> {
  const r = await m.query(`SELECT tin FROM taxpayer WHERE id = $1`, [taxpayerId]);
  return r.length ? maskTin(String(r[0].tin)) : null;
}

/**
 * Need-to-know for actions on one case: a supervisor may act on any case; an examiner only
 * on a case assigned to them.
 */
export function assertMayAct(actor: SessionUser, c: ExamCase): void {
  if (actor.role === 'supervisor') return;
  if (actor.role === 'examiner' && c.assigneeId === actor.id) return;
  throw new HttpError(403, c.assigneeId ? 'This case is assigned to another examiner.' : 'Claim this case before working on it.');
}

/** Appends a case event. */
export async function addCaseEvent(m: EntityManager, caseId: string, actor: SessionUser | null, kind: string, detail: Record<string, unknown> = {}, from?: CaseState, to?: CaseState): Promise<void> {
  await m.query(`INSERT INTO case_event (case_id, actor_id, kind, from_state, to_state, detail) VALUES ($1, $2, $3, $4, $5, $6::jsonb)`, [
    caseId,
    actor?.id ?? null,
    kind,
    from ?? null,
    to ?? null,
    JSON.stringify(detail),
  ]);
}

async function logChange(m: EntityManager, actor: SessionUser, c: ExamCase, route: string, detail: string) {
  await recordAccess(m, actor, { action: 'change', route, recordType: 'case', recordId: c.id, taxpayerId: c.taxpayerId, taxpayerLabel: await taxpayerLabelOf(m, c.taxpayerId), detail });
}

/** Extra facts a move may record. */
export interface MoveOptions {
  outcome?: string;
  adjustedAmount?: string;
  /** Case-event kind (default 'transition'); letters use 'document-request', memos 'referral'. */
  kind?: string;
  detail?: Record<string, unknown>;
  route?: string;
  dueDate?: string | null;
}

/**
 * Moves a case to another state inside the caller's transaction. Refuses (409) a move the
 * workflow does not allow, naming the allowed ones.
 */
export async function moveCase(m: EntityManager, actor: SessionUser, caseId: string, to: CaseState, opts: MoveOptions = {}): Promise<ExamCase> {
  const c = await lockCase(m, caseId);
  assertMayAct(actor, c);
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
  if (to === 'closed_no_change' || to === 'closed_adjusted' || to === 'referred') {
    c.closedAt = new Date();
    c.outcome = opts.outcome ?? null;
    c.adjustedAmount = to === 'closed_adjusted' ? (opts.adjustedAmount ?? null) : null;
  }
  await m.getRepository(ExamCase).save(c);
  await addCaseEvent(m, c.id, actor, opts.kind ?? 'transition', { ...(opts.detail ?? {}), ...(opts.outcome ? { outcome: opts.outcome } : {}), ...(opts.adjustedAmount ? { adjustedAmount: opts.adjustedAmount } : {}) }, from, to);
  await logChange(m, actor, c, opts.route ?? `POST /api/cases/${c.id}/transition`, `${from} → ${to}`);
  return c;
}

/** An examiner takes an open case. */
export async function claimCase(ds: DataSource, actor: SessionUser, caseId: string): Promise<ExamCase> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    if (c.state !== 'open') {
      throw new HttpError(409, c.assigneeId === actor.id ? 'You already hold this case.' : `Only an open case can be claimed; this one is ${CASE_STATE_LABELS[c.state].toLowerCase()}.`);
    }
    c.state = 'assigned';
    c.assigneeId = actor.id;
    c.updatedAt = new Date();
    await m.getRepository(ExamCase).save(c);
    await addCaseEvent(m, c.id, actor, 'claimed', { assigneeId: actor.id }, 'open', 'assigned');
    await logChange(m, actor, c, `POST /api/cases/${c.id}/claim`, 'claimed');
    return c;
  });
}

/** A supervisor gives an open or assigned case to an examiner (history kept as events). */
export async function assignCase(ds: DataSource, actor: SessionUser, caseId: string, assigneeId: string): Promise<ExamCase> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    if (c.state !== 'open' && c.state !== 'assigned') {
      throw new HttpError(409, `Only open or assigned cases can be given to an examiner; this one is ${CASE_STATE_LABELS[c.state].toLowerCase()}.`);
    }
    const who: { id: string; role: string; active: boolean; display_name: string }[] = await m.query(`SELECT id, role, active, display_name FROM app_user WHERE id = $1`, [assigneeId]);
    if (!who.length || !who[0].active || who[0].role !== 'examiner') throw new HttpError(422, 'Assign cases to an active examiner.');
    if (c.assigneeId === assigneeId) throw new HttpError(409, `The case is already with ${who[0].display_name}.`);
    const from = c.state;
    const previous = c.assigneeId;
    c.state = 'assigned';
    c.assigneeId = assigneeId;
    c.updatedAt = new Date();
    await m.getRepository(ExamCase).save(c);
    await addCaseEvent(m, c.id, actor, previous ? 'reassigned' : 'assigned', { from: previous, to: assigneeId }, from, 'assigned');
    await logChange(m, actor, c, `POST /api/cases/${c.id}/assign`, `assigned to ${who[0].display_name}`);
    return c;
  });
}

/**
 * One case for the case screen (issue 7): the case with its return, lines, score, history
 * in words, notes and letters, and what the caller may do now; opening a case writes one
 * 'view' line to the access log (and, for its examiner, marks it seen). Also the examiners one may filter by or assign to.
 */
import type { DataSource } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import {
  MOVES_ELSEWHERE,
  moveLabel,
  PREPARER_CASES_SHOWN,
  type CaseActions,
  type CaseDetail,
  type CaseHistoryEntry,
  type Examiner,
} from '../../shared/case-api';
import { CASE_STATE_LABELS, CASE_TRANSITIONS, isFinalState, type CaseState } from '../../shared/cases';
import { isUuid } from '../../shared/ids';
import { can } from '../../shared/permissions';
import type { LineCode } from '../../shared/returns/line-codes';
import { ScoreBreakdownSchema } from '../../shared/scoring/breakdown';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import type { SessionUser } from '../auth/access';
import { HttpError } from '../http/errors';
import {
  findCaseDetail,
  findCaseEvents,
  findCaseLetters,
  findCaseNotes,
  findExaminers,
  findLineItems,
  findPreparerOtherCases,
  findTaxpayerOtherReturns,
  userNames,
  type CaseEventRecord,
} from './case.repository';
import { findReplyUnreadSince, markSeenByAssignee } from './case-queue.repository';
import { mayAct } from './case-workflow';
import { longDate } from '../../shared/letters';
import { caseDeadline } from './case-deadline.service';
import { ASSESSMENT_DEADLINE_CAUTION } from '../../shared/returns/assessment-deadline';

/** What the caller may do now; the transition route makes every move listed here. */
export function actionsFor(actor: Pick<SessionUser, 'id' | 'role'>, state: CaseState, assigneeId: string | null): CaseActions {
  const acts = mayAct(actor, assigneeId);
  return {
    canAct: acts,
    claim: state === 'open' && can(actor.role, 'workCases'),
    assign: can(actor.role, 'assignCases') && !isFinalState(state),
    transitions: acts ? CASE_TRANSITIONS[state].filter((to) => !MOVES_ELSEWHERE[to]).map((to) => ({ to, label: moveLabel(state, to) })) : [],
    note: acts,
    revealTin: acts,
    reopen: can(actor.role, 'reopenCases') && isFinalState(state),
  };
}

const stateWord = (s: string | null) => (s && s in CASE_STATE_LABELS ? CASE_STATE_LABELS[s as CaseState].toLowerCase() : (s ?? '?'));

/** The history line in words. */
function summarise(e: CaseEventRecord, names: Map<string, string>): string {
  const who = e.actorName ?? 'Plumbline';
  const d = e.detail ?? {};
  const name = (id: unknown) => (typeof id === 'string' ? (names.get(id) ?? 'an examiner no longer listed') : 'nobody');
  switch (e.kind) {
    case 'opened':
      if (d.selection === 'random') return `Opened for random review${d.profileVersion ? ` (scoring run under profile version ${d.profileVersion})` : ''}`;
      return `Opened by scoring${d.profileVersion ? ` (profile version ${d.profileVersion})` : ''}`;
    case 'rescored':
      return `Score updated${d.profileVersion ? ` under profile version ${d.profileVersion}` : ''}`;
    case 'claimed':
      return `${who} claimed the case`;
    case 'assigned':
      return `${who} assigned the case to ${name(d.to)}`;
    case 'reassigned':
      return `${who} reassigned the case from ${name(d.from)} to ${name(d.to)}`;
    case 'reply-overdue':
      return `No reply by ${typeof d.dueDate === 'string' ? longDate(d.dueDate) : 'the due date'}${e.toState === 'in_review' ? '; the case is back in review' : ''}`;
    case 'reminder':
      return `Plumbline sent the taxpayer a reminder${typeof d.dueDate === 'string' ? ` before the due date, ${longDate(d.dueDate)}` : ''}, with a new reply link`;
    case 'handed-over':
      return `${who} handed the case over from ${name(d.from)} to ${name(d.to)}; it stays ${stateWord(e.toState)}`;
    case 'document-request':
      return `${who} sent a document request; the case awaits the reply`;
    case 'referral':
      return `${who} referred the case${typeof d.outcome === 'string' ? `: ${d.outcome}` : ''}`;
    case 'reopened':
      return `${who} reopened the case (it was ${stateWord(e.fromState)}); it is back ${stateWord(e.toState)}${typeof d.reason === 'string' ? `. Reason: ${d.reason}` : ''}`;
    case 'reply-received': {
      // Written by the reply link with no actor: the taxpayer, never "Plumbline".
      const files = typeof d.files === 'number' ? ` (${d.files} file${d.files === 1 ? '' : 's'})` : '';
      const back = e.toState === 'in_review' ? '; the case is back in review' : e.toState ? `; the case moved to ${stateWord(e.toState)}` : '';
      return `The taxpayer replied through the reply link${files}${back}`;
    }
    default: {
      let s = `${who} moved the case from ${stateWord(e.fromState)} to ${stateWord(e.toState)}`;
      if (typeof d.adjustedAmount === 'string') s += `, adjusted amount ${d.adjustedAmount}`;
      if (typeof d.outcome === 'string') s += `: ${d.outcome}`;
      return s;
    }
  }
}

/**
 * One case for the case screen, logged as a 'view'. 404 when there is no such case. When the
 * reader is the case's examiner, the case counts as opened by them: an unread reply is cleared
 * (and reported once, in `replyUnreadSince`, so the screen can say what is new) and "handed to
 * me" and "requests expired" stop counting what came before this moment.
 */
export async function getCaseDetail(ds: DataSource, audit: StaffAudit, caseId: string): Promise<CaseDetail> {
  if (!isUuid(caseId)) throw new HttpError(404, 'No such case.');
  const c = await findCaseDetail(ds, caseId);
  if (!c) throw new HttpError(404, 'No such case.');
  const [lines, events, notes, letters, deadline, otherReturns, preparerCases, replyUnreadSince] = await Promise.all([
    findLineItems(ds, c.returnId),
    findCaseEvents(ds, caseId),
    findCaseNotes(ds, caseId),
    findCaseLetters(ds, caseId),
    caseDeadline(ds, caseId),
    findTaxpayerOtherReturns(ds, c.taxpayerId, c.returnId),
    findPreparerOtherCases(ds, c.returnId, PREPARER_CASES_SHOWN),
    // The examiner's own opening counts as seen (issue 14): it clears an unread reply and
    // reports it once; anyone else only reads whether one waits.
    c.assigneeId === audit.actor.id ? markSeenByAssignee(ds, caseId, audit.actor.id) : findReplyUnreadSince(ds, caseId),
  ]);
  const mentioned = new Set<string>();
  for (const e of events) for (const k of ['from', 'to', 'assigneeId']) if (typeof e.detail?.[k] === 'string') mentioned.add(e.detail[k] as string);
  const names = await userNames(ds, [...mentioned].filter(isUuid));
  await recordAccess(ds, audit, { action: 'view', recordType: 'case', recordId: caseId, taxpayerId: c.taxpayerId, taxpayerLabel: maskTin(String(c.tin)) });
  const history: CaseHistoryEntry[] = events.map((e) => ({
    id: e.id,
    at: e.at.toISOString(),
    kind: e.kind,
    actorName: e.actorName,
    fromState: e.fromState,
    toState: e.toState,
    summary: summarise(e, names),
  }));
  return {
    id: c.id,
    state: c.state,
    selection: c.selection,
    assignee: c.assigneeId ? { id: c.assigneeId, name: c.assigneeName ?? 'an examiner no longer listed' } : null,
    riskScore: Number(c.riskScore),
    priority: Number(c.priority),
    amountAtStake: c.amountAtStake,
    openedAt: c.openedAt.toISOString(),
    updatedAt: c.updatedAt.toISOString(),
    closedAt: c.closedAt ? c.closedAt.toISOString() : null,
    dueDate: c.dueDate,
    deadline: { ...deadline, caution: ASSESSMENT_DEADLINE_CAUTION },
    outcome: c.outcome,
    adjustedAmount: c.adjustedAmount,
    taxpayer: {
      id: c.taxpayerId,
      name: c.taxpayerName,
      maskedTin: maskTin(String(c.tin)),
      activityCode: c.activityCode as CaseDetail['taxpayer']['activityCode'],
    },
    return: {
      id: c.returnId,
      returnRef: c.returnRef,
      taxYear: Number(c.taxYear),
      batchId: c.batchId,
      preparerCode: c.preparerCode,
      totals: {
        wages: c.totalWages,
        interest: c.totalInterest,
        receipts: c.totalReceipts,
        businessExpenses: c.totalBusinessExpenses,
        income: c.computedIncome,
        reportedIncome: c.reportedIncome,
        deductions: c.computedDeductions,
        reportedDeductions: c.reportedDeductions,
        taxable: c.taxableIncome,
        tax: c.computedTax,
        withheld: c.taxWithheld,
        refund: c.computedRefund,
        reportedRefund: c.reportedRefund,
      },
    },
    lineItems: lines.map((l) => ({ lineNo: Number(l.lineNo), lineCode: l.lineCode as LineCode, amount: l.amount })),
    score: { profileVersion: Number(c.profileVersion), scoredAt: c.scoredAt.toISOString(), breakdown: ScoreBreakdownSchema.parse(c.breakdown) },
    history,
    notes: notes.map((n) => ({ id: n.id, at: n.at.toISOString(), authorId: n.authorId, authorName: n.authorName, text: n.text })),
    letters: letters.map((l) => ({ id: l.id, kind: l.kind, createdAt: l.createdAt.toISOString() })),
    actions: actionsFor(audit.actor, c.state, c.assigneeId),
    related: {
      taxpayerReturns: otherReturns.map((o) => ({
        returnId: o.returnId,
        returnRef: o.returnRef,
        taxYear: Number(o.taxYear),
        superseded: o.superseded,
        caseId: o.caseId,
        state: o.state,
        outcome: o.outcome,
        adjustedAmount: o.adjustedAmount,
        finishedAt: o.closedAt ? o.closedAt.toISOString() : null,
      })),
      preparer: c.preparerCode
        ? {
            code: c.preparerCode,
            cases: preparerCases.map((p) => ({
              caseId: p.caseId,
              returnRef: p.returnRef,
              taxYear: Number(p.taxYear),
              taxpayerName: p.taxpayerName,
              state: p.state,
              riskScore: Number(p.riskScore),
            })),
            total: preparerCases[0]?.total ?? 0,
          }
        : null,
    },
    replyUnreadSince: replyUnreadSince ? replyUnreadSince.toISOString() : null,
  };
}

/** Active examiners one can filter by or assign to. */
export async function listExaminers(ds: DataSource): Promise<Examiner[]> {
  return (await findExaminers(ds)).map((e) => ({ id: e.id, username: e.username, displayName: e.displayName }));
}

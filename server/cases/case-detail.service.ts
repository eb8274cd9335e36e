/**
 * One case for the case screen (issue 7): the case with its return, lines, score, history
 * in words, notes and letters, and what the caller may do now; opening a case writes one
 * 'view' line to the access log. Also the examiners one may filter by or assign to.
 */
import type { DataSource } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import { MOVES_ELSEWHERE, moveLabel, type CaseActions, type CaseDetail, type CaseHistoryEntry, type Examiner } from '../../shared/case-api';
import { CASE_STATE_LABELS, CASE_TRANSITIONS, type CaseState } from '../../shared/cases';
import { isUuid } from '../../shared/ids';
import { can } from '../../shared/permissions';
import type { LineCode } from '../../shared/returns/line-codes';
import { ScoreBreakdownSchema } from '../../shared/scoring/breakdown';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import type { SessionUser } from '../auth/access';
import { HttpError } from '../http/errors';
import { findCaseDetail, findCaseEvents, findCaseLetters, findCaseNotes, findExaminers, findLineItems, userNames, type CaseEventRow } from './case.repository';
import { mayAct } from './case-workflow';

/** What the caller may do now; the transition route makes every move listed here. */
export function actionsFor(actor: Pick<SessionUser, 'id' | 'role'>, state: CaseState, assigneeId: string | null): CaseActions {
  const acts = mayAct(actor, assigneeId);
  return {
    canAct: acts,
    claim: state === 'open' && can(actor.role, 'workCases'),
    assign: can(actor.role, 'assignCases') && (state === 'open' || state === 'assigned'),
    transitions: acts ? CASE_TRANSITIONS[state].filter((to) => !MOVES_ELSEWHERE[to]).map((to) => ({ to, label: moveLabel(state, to) })) : [],
    note: acts,
    revealTin: acts,
  };
}

const stateWord = (s: string | null) => (s && s in CASE_STATE_LABELS ? CASE_STATE_LABELS[s as CaseState].toLowerCase() : (s ?? '?'));

/** The history line in words. */
function summarise(e: CaseEventRow, names: Map<string, string>): string {
  const who = e.actor_name ?? 'Plumbline';
  const d = e.detail ?? {};
  const name = (id: unknown) => (typeof id === 'string' ? (names.get(id) ?? 'an examiner no longer listed') : 'nobody');
  switch (e.kind) {
    case 'opened':
      return `Opened by scoring${d.profileVersion ? ` (profile version ${d.profileVersion})` : ''}`;
    case 'rescored':
      return `Score updated${d.profileVersion ? ` under profile version ${d.profileVersion}` : ''}`;
    case 'claimed':
      return `${who} claimed the case`;
    case 'assigned':
      return `${who} assigned the case to ${name(d.to)}`;
    case 'reassigned':
      return `${who} reassigned the case from ${name(d.from)} to ${name(d.to)}`;
    case 'document-request':
      return `${who} sent a document request; the case awaits the reply`;
    case 'referral':
      return `${who} referred the case${typeof d.outcome === 'string' ? `: ${d.outcome}` : ''}`;
    case 'reply-received': {
      // Written by the reply link with no actor: the taxpayer, never "Plumbline".
      const files = typeof d.files === 'number' ? ` (${d.files} file${d.files === 1 ? '' : 's'})` : '';
      const back = e.to_state === 'in_review' ? '; the case is back in review' : e.to_state ? `; the case moved to ${stateWord(e.to_state)}` : '';
      return `The taxpayer replied through the reply link${files}${back}`;
    }
    default: {
      let s = `${who} moved the case from ${stateWord(e.from_state)} to ${stateWord(e.to_state)}`;
      if (typeof d.adjustedAmount === 'string') s += `, adjusted amount ${d.adjustedAmount}`;
      if (typeof d.outcome === 'string') s += `: ${d.outcome}`;
      return s;
    }
  }
}

/** One case for the case screen, logged as a 'view'. 404 when there is no such case. */
export async function getCaseDetail(ds: DataSource, audit: StaffAudit, caseId: string): Promise<CaseDetail> {
  if (!isUuid(caseId)) throw new HttpError(404, 'No such case.');
  const c = await findCaseDetail(ds, caseId);
  if (!c) throw new HttpError(404, 'No such case.');
  const [lines, events, notes, letters] = await Promise.all([findLineItems(ds, c.return_id), findCaseEvents(ds, caseId), findCaseNotes(ds, caseId), findCaseLetters(ds, caseId)]);
  const mentioned = new Set<string>();
  for (const e of events) for (const k of ['from', 'to', 'assigneeId']) if (typeof e.detail?.[k] === 'string') mentioned.add(e.detail[k] as string);
  const names = await userNames(ds, [...mentioned].filter(isUuid));
  await recordAccess(ds, audit, { action: 'view', recordType: 'case', recordId: caseId, taxpayerId: c.taxpayer_id, taxpayerLabel: maskTin(String(c.tin)) });
  const history: CaseHistoryEntry[] = events.map((e) => ({
    id: e.id,
    at: e.at.toISOString(),
    kind: e.kind,
    actorName: e.actor_name,
    fromState: e.from_state,
    toState: e.to_state,
    summary: summarise(e, names),
  }));
  return {
    id: c.id,
    state: c.state,
    assignee: c.assignee_id ? { id: c.assignee_id, name: c.assignee_name ?? 'an examiner no longer listed' } : null,
    riskScore: Number(c.risk_score),
    priority: Number(c.priority),
    amountAtStake: c.amount_at_stake,
    openedAt: c.opened_at.toISOString(),
    updatedAt: c.updated_at.toISOString(),
    closedAt: c.closed_at ? c.closed_at.toISOString() : null,
    dueDate: c.due_date,
    outcome: c.outcome,
    adjustedAmount: c.adjusted_amount,
    taxpayer: { id: c.taxpayer_id, name: c.taxpayer_name, maskedTin: maskTin(String(c.tin)), activityCode: c.activity_code as CaseDetail['taxpayer']['activityCode'] },
    return: {
      id: c.return_id,
      returnRef: c.return_ref,
      taxYear: Number(c.tax_year),
      batchId: c.batch_id,
      preparerCode: c.preparer_code,
      totals: {
        wages: c.total_wages,
        interest: c.total_interest,
        receipts: c.total_receipts,
        businessExpenses: c.total_business_expenses,
        income: c.computed_income,
        reportedIncome: c.reported_income,
        deductions: c.computed_deductions,
        reportedDeductions: c.reported_deductions,
        taxable: c.taxable_income,
        tax: c.computed_tax,
        withheld: c.tax_withheld,
        refund: c.computed_refund,
        reportedRefund: c.reported_refund,
      },
    },
    lineItems: lines.map((l) => ({ lineNo: Number(l.line_no), lineCode: l.line_code as LineCode, amount: l.amount })),
    score: { profileVersion: Number(c.profile_version), scoredAt: c.scored_at.toISOString(), breakdown: ScoreBreakdownSchema.parse(c.breakdown) },
    history,
    notes: notes.map((n) => ({ id: n.id, at: n.at.toISOString(), authorId: n.author_id, authorName: n.author_name, text: n.text })),
    letters: letters.map((l) => ({ id: l.id, kind: l.kind, createdAt: l.created_at.toISOString() })),
    actions: actionsFor(audit.actor, c.state, c.assignee_id),
  };
}

/** Active examiners one can filter by or assign to. */
export async function listExaminers(ds: DataSource): Promise<Examiner[]> {
  return (await findExaminers(ds)).map((e) => ({ id: e.id, username: e.username, displayName: e.display_name }));
}

/**
 * Case work (issue 7): the queue, one case, notes, the moves an examiner makes, the full TIN
 * on request, reassignment and the queue export. Changes go through case-workflow.ts (which
 * locks the case, checks the move, writes the case event and the access-log line in one
 * transaction); this file adds the reads, notes and the export, each logged.
 *
 * Access-log choices: a page of the queue writes one line per case shown (one INSERT for
 * the page), because the queue shows each taxpayer's name and masked TIN, and the
 * administrator's log is searched by taxpayer: "who saw this taxpayer" must find queue
 * views too. Opening a case writes one 'view' line; revealing the full TIN one 'reveal-tin'
 * line; an export one 'export' line naming its filters and row count (the filters
 * reproduce the set, and 100,000 lines for one download would bury the log).
 */
import ExcelJS from 'exceljs';
import type { Writable } from 'node:stream';
import type { DataSource } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import {
  MOVES_ELSEWHERE,
  moveLabel,
  type BulkReassign,
  type BulkReassignResult,
  type CaseActions,
  type CaseChanged,
  type CaseDetail,
  type CaseHistoryEntry,
  type CaseList,
  type CaseListItem,
  type CaseListQuery,
  type CaseNoteDto,
  type Examiner,
} from '../../shared/case-api';
import { CASE_STATE_LABELS, CASE_TRANSITIONS, type CaseState, type TransitionRequest } from '../../shared/cases';
import { SCREENING_CAUTION } from '../../shared/cautions';
import { can } from '../../shared/permissions';
import type { LineCode } from '../../shared/returns/line-codes';
import { ScoreBreakdownSchema } from '../../shared/scoring/breakdown';
import { safeCellText } from '../../shared/spreadsheet-text';
import { recordAccess } from '../access-log/access-log.service';
import type { SessionUser } from '../auth/access';
import { HttpError } from '../http/errors';
import {
  caseFilterOf,
  countCases,
  findCaseDetail,
  findCaseEvents,
  findCaseLetters,
  findCaseNotes,
  findCasePage,
  findCaseTin,
  findExaminers,
  findLineItems,
  insertCaseNote,
  iterateCases,
  userNames,
  type CaseEventRow,
  type CaseFilter,
  type CaseRow,
} from './case.repository';
import { assertMayAct, assignCase, claimCase, lockCase, moveCase, taxpayerLabelOf } from './case-workflow';
import type { ExamCase } from './exam-case.entity';
import { isUuid } from '../../shared/ids';


function toItem(r: CaseRow): CaseListItem {
  return {
    id: r.id,
    returnRef: r.return_ref,
    taxYear: Number(r.tax_year),
    riskScore: Number(r.risk_score),
    priority: Number(r.priority),
    amountAtStake: r.amount_at_stake,
    state: r.state,
    assignee: r.assignee_id,
    assigneeName: r.assignee_name,
    taxpayerName: r.taxpayer_name,
    maskedTin: maskTin(String(r.tin)),
    activityCode: r.activity_code as CaseListItem['activityCode'],
    batchId: r.batch_id,
    openedAt: r.opened_at.toISOString(),
    dueDate: r.due_date,
  };
}

/**
 * How long a queue total may be reused. Counting 100,000 cases takes 25–50 ms (measured:
 * an index-only scan of every case, more with a tax-year or activity filter), which would
 * be most of every page's time; the page itself is always read fresh. A total can
 * therefore lag a change by at most this long, and not at all for changes made through
 * this server's case routes, which drop the cached totals.
 */
export const QUEUE_TOTAL_TTL_MS = 5_000;

interface CachedTotal {
  at: number;
  generation: number;
  total: Promise<number>;
}
// Per database (tests run several apps in one process), per filter.
const totals = new WeakMap<DataSource, Map<string, CachedTotal>>();
const generations = new WeakMap<DataSource, number>();

/** Forgets the cached queue totals of a database (after a case changed). */
export function dropQueueTotals(ds: DataSource): void {
  generations.set(ds, (generations.get(ds) ?? 0) + 1);
}

/**
 * The total for a filter. Filters by examiner or by search are cheap (an index finds a few
 * thousand cases at most) and personal ("Mine" must count a case just claimed), so they
 * are always counted; the broad views share one count per filter for a few seconds, and
 * callers arriving while it runs wait for the same count instead of starting their own.
 */
async function queueTotal(ds: DataSource, f: CaseFilter): Promise<number> {
  if (f.assignee !== undefined || f.q) return countCases(ds, f);
  const byFilter = totals.get(ds) ?? new Map<string, CachedTotal>();
  totals.set(ds, byFilter);
  const key = JSON.stringify([f.states, f.batch, f.taxYear, f.activity]);
  const generation = generations.get(ds) ?? 0;
  const hit = byFilter.get(key);
  if (hit && hit.generation === generation && Date.now() - hit.at < QUEUE_TOTAL_TTL_MS) return hit.total;
  if (byFilter.size > 500) byFilter.clear(); // many one-off filters: start over rather than grow
  const total = countCases(ds, f);
  byFilter.set(key, { at: Date.now(), generation, total });
  total.catch(() => byFilter.delete(key));
  return total;
}

/**
 * One page of the queue for the signed-in user, logged as one 'view' line per case shown.
 * The total is counted beside the page (see {@link queueTotal}).
 */
export async function listCases(ds: DataSource, actor: SessionUser, q: CaseListQuery): Promise<CaseList> {
  const f = caseFilterOf(q, actor.id);
  const [rows, total] = await Promise.all([findCasePage(ds, f, q.sort, q.page, q.pageSize), queueTotal(ds, f)]);
  const route = 'GET /api/cases';
  await recordAccess(
    ds,
    actor,
    rows.map((r) => ({ action: 'view' as const, route, recordType: 'case', recordId: r.id, taxpayerId: r.taxpayer_id, taxpayerLabel: maskTin(String(r.tin)), detail: `queue page ${q.page}` })),
  );
  return { items: rows.map(toItem), total, page: q.page, pageSize: q.pageSize };
}

/** Who may act on a case (its examiner, or a supervisor): the same rule as assertMayAct. */
function mayAct(actor: SessionUser, assigneeId: string | null): boolean {
  return actor.role === 'supervisor' || (actor.role === 'examiner' && assigneeId === actor.id);
}

/** What the caller may do now; the transition route makes every move listed here. */
export function actionsFor(actor: SessionUser, state: CaseState, assigneeId: string | null): CaseActions {
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
    default: {
      let s = `${who} moved the case from ${stateWord(e.from_state)} to ${stateWord(e.to_state)}`;
      if (typeof d.adjustedAmount === 'string') s += `, adjusted amount ${d.adjustedAmount}`;
      if (typeof d.outcome === 'string') s += `: ${d.outcome}`;
      return s;
    }
  }
}

/** One case for the case screen, logged as a 'view'. 404 when there is no such case. */
export async function getCaseDetail(ds: DataSource, actor: SessionUser, caseId: string): Promise<CaseDetail> {
  if (!isUuid(caseId)) throw new HttpError(404, 'No such case.');
  const c = await findCaseDetail(ds, caseId);
  if (!c) throw new HttpError(404, 'No such case.');
  const [lines, events, notes, letters] = await Promise.all([findLineItems(ds, c.return_id), findCaseEvents(ds, caseId), findCaseNotes(ds, caseId), findCaseLetters(ds, caseId)]);
  const mentioned = new Set<string>();
  for (const e of events) for (const k of ['from', 'to', 'assigneeId']) if (typeof e.detail?.[k] === 'string') mentioned.add(e.detail[k] as string);
  const names = await userNames(ds, [...mentioned].filter(isUuid));
  await recordAccess(ds, actor, { action: 'view', route: `GET /api/cases/${caseId}`, recordType: 'case', recordId: caseId, taxpayerId: c.taxpayer_id, taxpayerLabel: maskTin(String(c.tin)) });
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
    actions: actionsFor(actor, c.state, c.assignee_id),
  };
}

const changed = (c: ExamCase): CaseChanged => ({ id: c.id, state: c.state, assignee: c.assigneeId });

/** An examiner (or supervisor) takes an open case. */
export async function claim(ds: DataSource, actor: SessionUser, caseId: string): Promise<CaseChanged> {
  const c = await claimCase(ds, actor, caseId);
  dropQueueTotals(ds);
  return changed(c);
}

/** A supervisor gives a case to an examiner (reassignment kept in the history). */
export async function assign(ds: DataSource, actor: SessionUser, caseId: string, assigneeId: string): Promise<CaseChanged> {
  const c = await assignCase(ds, actor, caseId, assigneeId);
  dropQueueTotals(ds);
  return changed(c);
}

/**
 * Moves a case. Moves that belong to another action (claiming, a document request, a
 * referral memo) are refused with 409 naming that action; the rest are checked by
 * moveCase against the workflow (409 naming the allowed moves).
 */
export async function transition(ds: DataSource, actor: SessionUser, caseId: string, req: TransitionRequest): Promise<CaseChanged> {
  const moved = await ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(actor, c);
    const elsewhere = MOVES_ELSEWHERE[req.to];
    if (elsewhere && CASE_TRANSITIONS[c.state].includes(req.to)) throw new HttpError(409, elsewhere);
    return moveCase(m, actor, caseId, req.to, { outcome: req.outcome, adjustedAmount: req.adjustedAmount });
  });
  dropQueueTotals(ds);
  return changed(moved);
}

/** Appends a note (the caller must be able to act on the case); logged as a change. */
export async function addNote(ds: DataSource, actor: SessionUser, caseId: string, text: string): Promise<CaseNoteDto> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(actor, c);
    const n = await insertCaseNote(m, caseId, actor.id, text);
    await recordAccess(m, actor, {
      action: 'change',
      route: `POST /api/cases/${caseId}/notes`,
      recordType: 'case',
      recordId: caseId,
      taxpayerId: c.taxpayerId,
      taxpayerLabel: await taxpayerLabelOf(m, c.taxpayerId),
      detail: `note ${n.id} added`,
    });
    return { id: n.id, at: n.at.toISOString(), authorId: n.author_id, authorName: n.author_name, text: n.text };
  });
}

/**
 * The full TIN, for whoever may act on the case (need-to-know: reading the queue does not
 * need it), logged as 'reveal-tin'.
 */
export async function revealTin(ds: DataSource, actor: SessionUser, caseId: string): Promise<{ tin: string }> {
  return ds.transaction(async (m) => {
    const c = await lockCase(m, caseId);
    assertMayAct(actor, c);
    const t = await findCaseTin(m, caseId);
    if (!t) throw new HttpError(404, 'No such case.');
    await recordAccess(m, actor, { action: 'reveal-tin', route: `POST /api/cases/${caseId}/reveal-tin`, recordType: 'case', recordId: caseId, taxpayerId: t.taxpayer_id, taxpayerLabel: maskTin(t.tin) });
    return { tin: String(t.tin) };
  });
}

/** Active examiners one can filter by or assign to. */
export async function listExaminers(ds: DataSource): Promise<Examiner[]> {
  return (await findExaminers(ds)).map((e) => ({ id: e.id, username: e.username, displayName: e.display_name }));
}

/**
 * A supervisor moves a selection of cases to one examiner. Each case is its own
 * transaction (assignCase), so one case that changed meanwhile does not hold the others
 * back; refusals come back with their reason.
 */
export async function bulkReassign(ds: DataSource, actor: SessionUser, input: BulkReassign): Promise<BulkReassignResult> {
  const examiners = await findExaminers(ds);
  if (!examiners.some((e) => e.id === input.assigneeId)) throw new HttpError(422, 'Assign cases to an active examiner.');
  const result: BulkReassignResult = { moved: [], refused: [] };
  for (const id of [...new Set(input.caseIds)]) {
    try {
      await assignCase(ds, actor, id, input.assigneeId);
      result.moved.push(id);
    } catch (e) {
      if (!(e instanceof HttpError)) throw e;
      result.refused.push({ id, reason: e.message });
    }
  }
  dropQueueTotals(ds);
  return result;
}

/** Words for the filters of an export (its access-log line and its About sheet). */
function describeFilter(f: CaseFilter, q: CaseListQuery): string {
  const parts = [
    f.states ? `state ${f.states.join('/')}` : 'every state',
    f.assignee === null ? 'unassigned' : f.assignee ? `assignee ${f.assignee}` : null,
    f.batch ? `batch ${f.batch}` : null,
    f.taxYear ? `tax year ${f.taxYear}` : null,
    f.activity ? `activity ${f.activity}` : null,
    // A full TIN in a log line would show the administrator taxpayer data: mask it.
    f.q ? `search "${/^\d{9}$/.test(f.q) ? maskTin(f.q) : f.q}"` : null,
    `sorted by ${q.sort}`,
  ];
  return parts.filter(Boolean).join(', ');
}

/**
 * Writes the filtered queue (every page, in queue order) as an XLSX workbook to `out`,
 * streamed row by row so 100,000 cases do not sit in memory. Every text cell goes through
 * safeCellText (formula injection); figures are numbers. Logged once as an 'export' with
 * its filters and row count, before the first byte leaves.
 *
 * @returns the number of case rows written
 */
export async function exportCases(ds: DataSource, actor: SessionUser, q: CaseListQuery, out: Writable): Promise<number> {
  const f = caseFilterOf(q, actor.id);
  const total = await countCases(ds, f);
  const filterText = describeFilter(f, q);
  await recordAccess(ds, actor, { action: 'export', route: 'GET /api/cases/export.xlsx', recordType: 'case-queue', detail: `${total} cases; ${filterText}` });

  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, useStyles: true, useSharedStrings: false });
  wb.creator = 'Plumbline';
  wb.created = new Date();
  const ws = wb.addWorksheet('Queue', { views: [{ state: 'frozen', ySplit: 1 }] });
  ws.columns = [
    { header: 'Return', key: 'ref', width: 16 },
    { header: 'Tax year', key: 'year', width: 9 },
    { header: 'Taxpayer', key: 'name', width: 30 },
    { header: 'TIN (masked)', key: 'tin', width: 14 },
    { header: 'Activity', key: 'activity', width: 14 },
    { header: 'Risk score', key: 'score', width: 11, style: { numFmt: '0.0' } },
    { header: 'Amount at stake', key: 'stake', width: 16, style: { numFmt: '#,##0.00' } },
    { header: 'Priority', key: 'priority', width: 14, style: { numFmt: '#,##0' } },
    { header: 'State', key: 'state', width: 18 },
    { header: 'Examiner', key: 'assignee', width: 22 },
    { header: 'Opened', key: 'opened', width: 12, style: { numFmt: 'yyyy-mm-dd' } },
    { header: 'Due', key: 'due', width: 12 },
    { header: 'Case id', key: 'id', width: 38 },
  ];
  ws.getRow(1).font = { bold: true };
  let written = 0;
  for await (const rows of iterateCases(ds, f, q.sort)) {
    for (const r of rows) {
      ws.addRow({
        ref: safeCellText(r.return_ref),
        year: Number(r.tax_year),
        name: safeCellText(r.taxpayer_name),
        tin: safeCellText(maskTin(String(r.tin))),
        activity: safeCellText(r.activity_code),
        score: Number(r.risk_score),
        // A spreadsheet figure is a binary float anyway; the database keeps the exact decimal.
        stake: Number(r.amount_at_stake),
        priority: Number(r.priority),
        state: safeCellText(CASE_STATE_LABELS[r.state]),
        assignee: r.assignee_name === null ? null : safeCellText(r.assignee_name),
        opened: r.opened_at,
        due: r.due_date === null ? null : safeCellText(r.due_date),
        id: r.id,
      }).commit();
      written++;
    }
  }
  ws.commit();
  const about = wb.addWorksheet('About');
  about.columns = [{ width: 22 }, { width: 100 }];
  for (const [k, v] of [
    ['Exported by', actor.username],
    ['Exported at', new Date().toISOString()],
    ['Filters', filterText],
    ['Cases', String(written)],
    ['Caution', SCREENING_CAUTION],
  ]) {
    about.addRow([k, safeCellText(v)]).commit();
  }
  about.commit();
  await wb.commit();
  return written;
}

/**
 * The examination queue (issue 7): a page of cases for the signed-in user, and the whole
 * filtered queue as an XLSX export, each logged.
 *
 * Access-log choices: a page of the queue writes one line per case shown (one INSERT for
 * the page), because the queue shows each taxpayer's name and masked TIN, and the
 * administrator's log is searched by taxpayer: "who saw this taxpayer" must find queue
 * views too. An export writes one 'export' line naming its filters and row count (the
 * filters reproduce the set, and 100,000 lines for one download would bury the log).
 */
import ExcelJS from 'exceljs';
import type { Writable } from 'node:stream';
import type { DataSource } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import type { CaseList, CaseListItem, CaseListQuery, NeedsMe } from '../../shared/case-api';
import { CASE_STATE_LABELS, isFinalState } from '../../shared/cases';
import { SCREENING_CAUTION } from '../../shared/cautions';
import { safeCellText } from '../../shared/spreadsheet-text';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import type { SessionUser } from '../auth/access';
import { caseFilterOf, countCases, countNeeds, findCasePage, iterateCases, type CaseFilter, type QueueCase } from './case-queue.repository';
import { now as officeNow, today } from '../clock';

function toItem(r: QueueCase): CaseListItem {
  return {
    id: r.id,
    returnRef: r.returnRef,
    taxYear: Number(r.taxYear),
    riskScore: Number(r.riskScore),
    priority: Number(r.priority),
    amountAtStake: r.amountAtStake,
    state: r.state,
    selection: r.selection,
    assignee: r.assigneeId,
    assigneeName: r.assigneeName,
    taxpayerName: r.taxpayerName,
    maskedTin: maskTin(String(r.tin)),
    activityCode: r.activityCode as CaseListItem['activityCode'],
    batchId: r.batchId,
    openedAt: r.openedAt.toISOString(),
    dueDate: r.dueDate,
    assessBy: r.assessBy,
    finished: isFinalState(r.state),
    replyUnread: r.replyUnread,
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
  if (f.assignee !== undefined || f.q || f.needs) return countCases(ds, f);
  const byFilter = totals.get(ds) ?? new Map<string, CachedTotal>();
  totals.set(ds, byFilter);
  const key = JSON.stringify([f.states, f.batch, f.taxYear, f.activity, f.assessByUpTo]);
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
export async function listCases(ds: DataSource, audit: StaffAudit, q: CaseListQuery): Promise<CaseList> {
  const f = caseFilterOf(q, audit.actor.id);
  const [rows, total] = await Promise.all([findCasePage(ds, f, q.sort, q.page, q.pageSize), queueTotal(ds, f)]);
  await recordAccess(
    ds,
    audit,
    rows.map((r) => ({
      action: 'view' as const,
      recordType: 'case' as const,
      recordId: r.id,
      taxpayerId: r.taxpayerId,
      taxpayerLabel: maskTin(String(r.tin)),
      detail: `queue page ${q.page}`,
    })),
  );
  return { items: rows.map(toItem), total, page: q.page, pageSize: q.pageSize };
}

/** How many of the caller's own cases need them for each reason (the "Needs me" strip, issue 14). */
export async function needsMe(ds: DataSource, actor: Pick<SessionUser, 'id'>): Promise<NeedsMe> {
  return countNeeds(ds, actor.id, today());
}

/** Words for the filters of an export (its access-log line and its About sheet). */
function describeFilter(f: CaseFilter, q: CaseListQuery): string {
  const parts = [
    f.states ? `state ${f.states.join('/')}` : 'every state',
    f.assignee === null ? 'unassigned' : f.assignee ? `assignee ${f.assignee}` : null,
    f.batch ? `batch ${f.batch}` : null,
    f.taxYear ? `tax year ${f.taxYear}` : null,
    f.activity ? `activity ${f.activity}` : null,
    f.assessByUpTo ? `assessment deadline by ${f.assessByUpTo}` : null,
    f.needs ? `needing the caller: ${f.needs.kind}` : null,
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
export async function exportCases(ds: DataSource, audit: StaffAudit, q: CaseListQuery, out: Writable): Promise<number> {
  const actor = audit.actor;
  const f = caseFilterOf(q, actor.id);
  const total = await countCases(ds, f);
  const filterText = describeFilter(f, q);
  await recordAccess(ds, audit, { action: 'export', recordType: 'case-queue', detail: `${total} cases; ${filterText}` });

  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, useStyles: true, useSharedStrings: false });
  wb.creator = 'Plumbline';
  wb.created = officeNow();
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
    // Last, so the earlier columns keep their places for anyone who reads them by position.
    { header: 'Assess by', key: 'assessBy', width: 12 },
  ];
  ws.getRow(1).font = { bold: true };
  let written = 0;
  for await (const rows of iterateCases(ds, f, q.sort)) {
    for (const r of rows) {
      ws.addRow({
        ref: safeCellText(r.returnRef),
        year: Number(r.taxYear),
        name: safeCellText(r.taxpayerName),
        tin: safeCellText(maskTin(String(r.tin))),
        activity: safeCellText(r.activityCode),
        score: Number(r.riskScore),
        // A spreadsheet figure is a binary float anyway; the database keeps the exact decimal.
        stake: Number(r.amountAtStake),
        priority: Number(r.priority),
        state: safeCellText(CASE_STATE_LABELS[r.state]),
        assignee: r.assigneeName === null ? null : safeCellText(r.assigneeName),
        opened: r.openedAt,
        due: r.dueDate === null ? null : safeCellText(r.dueDate),
        assessBy: r.assessBy === null ? null : safeCellText(r.assessBy),
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
    ['Exported at', officeNow().toISOString()],
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

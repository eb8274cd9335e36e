/**
 * Writing and reading the access log. Features call {@link recordAccess} for every read of
 * a return, case or export and for every change, with the audit context their route was
 * given (who, and which route: server/access-log/audit-context.ts).
 */
import type { DataSource } from 'typeorm';
import type { Writable } from 'node:stream';
import ExcelJS from 'exceljs';
import {
  ACCESS_LOG_EXPORT_MAX_ROWS,
  describeAccess,
  type AccessAction,
  type AccessLogEntry,
  type AccessLogExportQuery,
  type AccessLogPage,
  type AccessLogQuery,
  type AccessRecordType,
} from '../../shared/access-log';
import { safeCellText } from '../../shared/spreadsheet-text';
import type { Db } from '../db/db';
import { findAccessGroups, insertAccessLogs, type AccessGroupRow } from './access-log.repository';
import type { AuditContext, StaffAudit } from './audit-context';

/** What happened, to which record, about which taxpayer. */
export interface AccessEvent {
  action: AccessAction;
  recordType?: AccessRecordType;
  recordId?: string;
  taxpayerId?: string | null;
  taxpayerLabel?: string | null;
  detail?: string;
}

/**
 * Appends one or more lines for the context's actor (null for anonymous, e.g. a refused
 * sign-in or a taxpayer's reply link) and route. Pass the transaction's manager when the
 * change is transactional, so the log line commits or rolls back with it.
 */
export async function recordAccess(db: Db, audit: AuditContext, events: AccessEvent | AccessEvent[]): Promise<void> {
  const list = Array.isArray(events) ? events : [events];
  const user = audit.actor;
  await insertAccessLogs(
    db,
    list.map((e) => ({
      userId: user?.id ?? null,
      username: user?.username ?? null,
      role: user?.role ?? null,
      action: e.action,
      route: audit.route,
      recordType: e.recordType ?? null,
      recordId: e.recordId ?? null,
      taxpayerId: e.taxpayerId ?? null,
      taxpayerLabel: e.taxpayerLabel ?? null,
      detail: e.detail ?? null,
    })),
  );
}

/** A filtered page for the administrator's screen: one row per thing a person did. */
export async function listAccessLog(db: Db, q: AccessLogQuery): Promise<AccessLogPage> {
  const { rows, total } = await findAccessGroups(db, q, q.pageSize, (q.page - 1) * q.pageSize);
  return { items: rows.map(toEntry), total, page: q.page, pageSize: q.pageSize };
}

function toEntry(r: AccessGroupRow): AccessLogEntry {
  const action = r.action as AccessAction;
  return {
    id: String(r.lastId),
    at: new Date(r.lastAt).toISOString(),
    firstAt: new Date(r.firstAt).toISOString(),
    userId: r.userId,
    username: r.username,
    role: r.role as AccessLogEntry['role'],
    action,
    route: r.route,
    recordType: r.recordType,
    recordId: r.recordId,
    taxpayerId: r.taxpayerId,
    taxpayerLabel: r.taxpayerLabel,
    detail: r.detail,
    lines: r.lines,
    cases: r.cases,
    returnRef: r.returnRef,
    summary: describeAccess({
      action,
      route: r.route,
      recordType: r.recordType,
      detail: r.detail,
      routes: r.routes,
      cases: r.cases,
      returnRef: r.returnRef,
      anonymous: r.userId === null && r.username === null,
    }),
  };
}

/** The filters in words, for the export's own log line and its first sheet. */
export function filterWords(q: AccessLogExportQuery): string {
  const parts = [
    q.from && `from ${q.from}`,
    q.to && `to ${q.to}`,
    q.action && `action ${q.action}`,
    q.user && `user "${q.user}"`,
    q.taxpayer && `taxpayer ${q.taxpayer}`,
  ].filter(Boolean);
  return parts.length ? parts.join(', ') : 'no filters';
}

/**
 * Writes the filtered log (grouped as on the screen, newest first, at most
 * {@link ACCESS_LOG_EXPORT_MAX_ROWS} rows) as an XLSX workbook to `out`. The export is itself
 * logged, before anything is sent. Every text cell goes through safeCellText: user names,
 * details and sign-in names typed at the door could otherwise start a formula.
 */
export async function exportAccessLog(
  db: DataSource,
  audit: StaffAudit,
  q: AccessLogExportQuery,
  out: Writable,
  /** Called once the rows are read and the export logged, before the first byte is written. */
  onReady: () => void = () => undefined,
): Promise<void> {
  const { rows, total } = await findAccessGroups(db, q, ACCESS_LOG_EXPORT_MAX_ROWS, 0);
  const filters = filterWords(q);
  await recordAccess(db, audit, { action: 'export', recordType: 'access-log', detail: `${rows.length} rows; ${filters}` });
  onReady();
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, useStyles: true, useSharedStrings: false });
  wb.creator = 'Plumbline';
  const ws = wb.addWorksheet('access log', { views: [{ state: 'frozen', ySplit: 1 }] });
  ws.columns = [
    { header: 'From (UTC)', key: 'firstAt', width: 20, style: { numFmt: 'yyyy-mm-dd hh:mm:ss' } },
    { header: 'To (UTC)', key: 'at', width: 20, style: { numFmt: 'yyyy-mm-dd hh:mm:ss' } },
    { header: 'Person', key: 'username', width: 18 },
    { header: 'Role', key: 'role', width: 12 },
    { header: 'What was done', key: 'summary', width: 70 },
    { header: 'Return reference', key: 'returnRef', width: 20 },
    { header: 'Taxpayer (TIN)', key: 'taxpayerLabel', width: 16 },
    { header: 'Action', key: 'action', width: 16 },
    { header: 'Log lines', key: 'lines', width: 10 },
    { header: 'First route', key: 'route', width: 50 },
  ];
  ws.getRow(1).font = { bold: true };
  ws.autoFilter = { from: 'A1', to: 'J1' };
  ws.getRow(1).commit();
  for (const r of rows.map(toEntry)) {
    ws.addRow({
      firstAt: new Date(r.firstAt),
      at: new Date(r.at),
      username: safeCellText(r.username ?? (r.userId ? r.userId : '(nobody signed in)')),
      role: safeCellText(r.role),
      summary: safeCellText(r.summary),
      returnRef: safeCellText(r.returnRef),
      taxpayerLabel: safeCellText(r.taxpayerLabel),
      action: safeCellText(r.action),
      lines: r.lines,
      route: safeCellText(r.route),
    }).commit();
  }
  if (total > rows.length) {
    ws.addRow({ summary: `…and ${(total - rows.length).toLocaleString('en-GB')} more rows not exported: choose a shorter date range.` }).commit();
  }
  ws.commit();
  const about = wb.addWorksheet('about');
  about.columns = [
    { header: 'Field', key: 'k', width: 18 },
    { header: 'Value', key: 'v', width: 60 },
  ];
  about.addRow({ k: 'Filters', v: safeCellText(filters) }).commit();
  about.addRow({ k: 'Rows', v: rows.length }).commit();
  about.addRow({ k: 'Exported by', v: safeCellText(audit.actor.username) }).commit();
  about.commit();
  await wb.commit();
}

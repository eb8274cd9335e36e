/**
 * Writing and reading the access log. Features call {@link recordAccess} for every read of
 * a return, case or export and for every change, with the audit context their route was
 * given (who, and which route: server/access-log/audit-context.ts).
 */
import type { DataSource } from 'typeorm';
import type { AccessAction, AccessLogEntry, AccessLogPage, AccessLogQuery, AccessRecordType } from '../../shared/access-log';
import type { Db } from '../db/db';
import { findAccessLogs, insertAccessLogs } from './access-log.repository';
import type { AuditContext } from './audit-context';

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

/** A filtered page for the administrator's screen. */
export async function listAccessLog(ds: DataSource, q: AccessLogQuery): Promise<AccessLogPage> {
  const { items, total } = await findAccessLogs(ds, q);
  const out: AccessLogEntry[] = items.map((l) => ({
    id: String(l.id),
    at: l.at.toISOString(),
    userId: l.userId,
    username: l.username,
    role: l.role,
    action: l.action,
    route: l.route,
    recordType: l.recordType,
    recordId: l.recordId,
    taxpayerId: l.taxpayerId,
    taxpayerLabel: l.taxpayerLabel,
    detail: l.detail,
  }));
  return { items: out, total, page: q.page, pageSize: q.pageSize };
}

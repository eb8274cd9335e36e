/**
 * Writing and reading the access log. Features call {@link recordAccess} for every read of
 * a return, case or export and for every change (DESIGN.md section 2).
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { AccessAction, AccessLogEntry, AccessLogPage, AccessLogQuery } from '../../shared/access-log';
import type { SessionUser } from '../auth/access';
import { findAccessLogs, insertAccessLogs } from './access-log.repository';

/** What happened, to which record, about which taxpayer. */
export interface AccessEvent {
  action: AccessAction;
  /** Method and path, e.g. "GET /api/cases/…". */
  route: string;
  recordType?: string;
  recordId?: string;
  taxpayerId?: string | null;
  taxpayerLabel?: string | null;
  detail?: string;
}

/**
 * Appends one or more lines for a user (null for anonymous, e.g. a refused sign-in or a
 * taxpayer's reply link). Pass the transaction's manager when the change is transactional,
 * so the log line commits or rolls back with it.
 */
export async function recordAccess(db: DataSource | EntityManager, user: Pick<SessionUser, 'id' | 'username' | 'role'> | null, events: AccessEvent | AccessEvent[]): Promise<void> {
  const list = Array.isArray(events) ? events : [events];
  await insertAccessLogs(
    db,
    list.map((e) => ({
      userId: user?.id ?? null,
      username: user?.username ?? null,
      role: user?.role ?? null,
      action: e.action,
      route: e.route,
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

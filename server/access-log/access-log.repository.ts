/**
 * Queries on the access log. Inserts only: the table refuses updates and deletes.
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { AccessLogQuery } from '../../shared/access-log';
import { AccessLog } from './access-log.entity';

/** Fields of a new access-log line. */
export type NewAccessLog = Omit<AccessLog, 'id' | 'at'>;

/** Appends lines (one statement for many, e.g. a page of cases viewed). */
export async function insertAccessLogs(db: DataSource | EntityManager, rows: NewAccessLog[]): Promise<void> {
  if (rows.length === 0) return;
  await db.createQueryBuilder().insert().into(AccessLog).values(rows).execute();
}

/** One filtered page, newest first. */
export async function findAccessLogs(ds: DataSource, q: AccessLogQuery): Promise<{ items: AccessLog[]; total: number }> {
  const qb = ds.getRepository(AccessLog).createQueryBuilder('l');
  if (q.user) qb.andWhere('(l.username ILIKE :user OR l.user_id::text = :userExact)', { user: `%${q.user}%`, userExact: q.user });
  if (q.taxpayer) {
    // A taxpayer is named by its id, or by the last digits of its TIN as shown masked.
    const digits = q.taxpayer.replace(/\D/g, '');
    if (/^[0-9a-f-]{36}$/i.test(q.taxpayer)) qb.andWhere('l.taxpayer_id = :tp', { tp: q.taxpayer });
    else qb.andWhere('l.taxpayer_label LIKE :tl', { tl: `%${digits.slice(-3)}` });
  }
  if (q.from) qb.andWhere('l.at >= :from::date', { from: q.from });
  if (q.to) qb.andWhere(`l.at < (:to::date + interval '1 day')`, { to: q.to });
  if (q.action) qb.andWhere('l.action = :action', { action: q.action });
  qb.orderBy('l.at', 'DESC').addOrderBy('l.id', 'DESC');
  qb.skip((q.page - 1) * q.pageSize).take(q.pageSize);
  const [items, total] = await qb.getManyAndCount();
  return { items, total };
}

/**
 * Queries on the access log. Inserts only: the table refuses updates and deletes.
 */
import type { Db } from '../db/db';
import type { AccessLogExportQuery } from '../../shared/access-log';
import type { AccessLog } from './access-log.entity';
import { isUuid } from '../../shared/ids';

/** The filters of the log (a page's or an export's). */
export type AccessLogFilter = AccessLogExportQuery;

/** Fields of a new access-log line. */
export type NewAccessLog = Omit<AccessLog, 'id' | 'at'>;

/**
 * Appends lines in one statement (a page of the queue writes 25). Plain SQL over unnest:
 * TypeORM's insert builder spent about 1.6 ms of CPU per 25 rows, more than the page query.
 */
export async function insertAccessLogs(db: Db, rows: NewAccessLog[]): Promise<void> {
  if (rows.length === 0) return;
  const col = <K extends keyof NewAccessLog>(k: K) => rows.map((r) => r[k]);
  await db.query(
    `INSERT INTO access_log (user_id, username, role, action, route, record_type, record_id, taxpayer_id, taxpayer_label, detail)
     SELECT * FROM unnest($1::uuid[], $2::text[], $3::text[], $4::text[], $5::text[], $6::text[], $7::text[], $8::uuid[], $9::text[], $10::text[])`,
    [
      col('userId'),
      col('username'),
      col('role'),
      col('action'),
      col('route'),
      col('recordType'),
      col('recordId'),
      col('taxpayerId'),
      col('taxpayerLabel'),
      col('detail'),
    ],
  );
}

/** One group of lines: one thing a person did (see {@link findAccessGroups}). */
export interface AccessGroupRow {
  lastId: string;
  firstAt: Date;
  lastAt: Date;
  lines: number;
  userId: string | null;
  username: string | null;
  role: string | null;
  action: string;
  route: string;
  recordType: string | null;
  recordId: string | null;
  taxpayerId: string | null;
  taxpayerLabel: string | null;
  detail: string | null;
  /** The group's routes with ids written ":id". */
  routes: string[];
  cases: number;
  /** The return reference when the group touched exactly one case. */
  returnRef: string | null;
}

/** Views by one person of one thing closer together than this are one visit (common practice, no source). */
const VISIT_GAP = `interval '2 minutes'`;
const UUID_RE = `'[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}'`;

/** WHERE clause and parameters of the filters (shared by the page and the export). */
function filterSql(q: AccessLogFilter): { where: string; params: unknown[] } {
  const conds: string[] = [];
  const params: unknown[] = [];
  const p = (v: unknown) => {
    params.push(v);
    return `$${params.length}`;
  };
  if (q.user) conds.push(`(l.username ILIKE ${p(`%${q.user.replace(/[\\%_]/g, (c) => `\\${c}`)}%`)} OR l.user_id::text = ${p(q.user)})`);
  if (q.taxpayer) {
    // A taxpayer is named by its id, or by the last digits of its TIN as shown masked.
    if (isUuid(q.taxpayer)) conds.push(`l.taxpayer_id = ${p(q.taxpayer)}::uuid`);
    else conds.push(`l.taxpayer_label LIKE ${p(`%${q.taxpayer.replace(/\D/g, '').slice(-3)}`)}`);
  }
  if (q.from) conds.push(`l.at >= ${p(q.from)}::date`);
  if (q.to) conds.push(`l.at < (${p(q.to)}::date + interval '1 day')`);
  if (q.action) conds.push(`l.action = ${p(q.action)}`);
  return { where: conds.length ? `WHERE ${conds.join(' AND ')}` : '', params };
}

/**
 * The filtered log as groups, newest first: a person's consecutive lines about the same
 * thing (one case, one list, one record) form one group, views while they are less than
 * {@link VISIT_GAP} apart, other actions when written by the same request (same instant and
 * route). The case of a line comes from its route (/api/cases/:id…) or its record (a case, a
 * letter, a document request), and with it the return reference.
 *
 * In two stages, because the whole filtered log must be grouped to count and order the groups
 * but only one page of them is shown: the grouping carries the few columns it needs, and only
 * the page's lines are read whole and described (first line's fields, routes, cases). `keyed`
 * is MATERIALIZED so each line's case and subject (regular expressions, look-ups) are worked
 * out once: inlined, the window's lag() worked them out again for every comparison, which
 * made the page take about 25 s over 300,000 lines.
 */
export async function findAccessGroups(db: Db, q: AccessLogFilter, limit: number, offset: number): Promise<{ rows: AccessGroupRow[]; total: number }> {
  const { where, params } = filterSql(q);
  const rows: (Partial<AccessGroupRow> & { total: number })[] = await db.query(
    `WITH base AS (
       SELECT l.id, l.at, l.action, l.route, l.record_type, l.record_id,
              COALESCE(l.user_id::text, 'name:' || l.username, 'anonymous') AS who,
              -- A plain match, then the id cut out: substring() with a capture group runs
              -- Postgres's slow matcher, about 80 µs a line.
              CASE WHEN l.route ~ ('^[A-Z]+ /api/cases/' || ${UUID_RE})
                   THEN left(split_part(l.route, '/api/cases/', 2), 36)::uuid END AS route_case
         FROM access_log l ${where}
     ), cased AS (
       SELECT b.*,
              COALESCE(
                b.route_case,
                CASE WHEN b.record_type = 'case' AND b.record_id ~ ${UUID_RE} THEN b.record_id::uuid END,
                CASE WHEN b.record_type = 'document_request' AND b.record_id ~ ${UUID_RE}
                     THEN (SELECT dr.case_id FROM document_request dr WHERE dr.id = b.record_id::uuid) END,
                CASE WHEN b.record_type = 'letter' AND b.record_id ~ ${UUID_RE}
                     THEN (SELECT lt.case_id FROM letter lt WHERE lt.id = b.record_id::uuid) END
              ) AS case_id
         FROM base b
     ), keyed AS MATERIALIZED (
       SELECT c.id, c.at, c.action, c.route, c.who, c.case_id,
              CASE
                WHEN c.route_case IS NOT NULL THEN 'case:' || c.route_case
                WHEN c.action = 'view' AND c.record_type = 'case' THEN 'list:' || c.route
                WHEN c.case_id IS NOT NULL THEN 'case:' || c.case_id
                ELSE COALESCE(c.record_type, '') || ':' || COALESCE(c.record_id, '') || ':' || c.route
              END AS subject
         FROM cased c
     ), marked AS (
       SELECT k.id, k.at, k.who, k.case_id,
              CASE WHEN lag(k.id) OVER w IS NULL
                     OR lag(k.subject) OVER w <> k.subject
                     OR lag(k.action) OVER w <> k.action
                     OR (k.action = 'view' AND k.at - lag(k.at) OVER w > ${VISIT_GAP})
                     OR (k.action <> 'view' AND (k.at <> lag(k.at) OVER w OR k.route <> lag(k.route) OVER w))
                   THEN 1 ELSE 0 END AS starts
         FROM keyed k
       WINDOW w AS (PARTITION BY k.who ORDER BY k.at, k.id)
     ), lined AS (
       SELECT m.id, m.at, m.who, m.case_id, sum(m.starts) OVER (PARTITION BY m.who ORDER BY m.at, m.id) AS g FROM marked m
     ), groups AS (
       SELECT who, g, max(id) AS "lastId", min(at) AS "firstAt", max(at) AS "lastAt", count(*)::int AS lines
         FROM lined GROUP BY who, g
     ), page AS (
       SELECT * FROM groups ORDER BY "lastAt" DESC, "lastId" DESC LIMIT ${limit} OFFSET ${offset}
     ), described AS (
       SELECT p."lastId", p."firstAt", p."lastAt", p.lines,
              (array_agg(l.user_id ORDER BY l.at, l.id))[1] AS "userId",
              (array_agg(l.username ORDER BY l.at, l.id))[1] AS username,
              (array_agg(l.role ORDER BY l.at, l.id))[1] AS role,
              (array_agg(l.action ORDER BY l.at, l.id))[1] AS action,
              (array_agg(l.route ORDER BY l.at, l.id))[1] AS route,
              (array_agg(l.record_type ORDER BY l.at, l.id))[1] AS "recordType",
              (array_agg(l.record_id ORDER BY l.at, l.id))[1] AS "recordId",
              (array_agg(l.taxpayer_id ORDER BY l.at, l.id) FILTER (WHERE l.taxpayer_id IS NOT NULL))[1] AS "taxpayerId",
              (array_agg(l.taxpayer_label ORDER BY l.at, l.id) FILTER (WHERE l.taxpayer_label IS NOT NULL))[1] AS "taxpayerLabel",
              (array_agg(l.detail ORDER BY l.at, l.id))[1] AS detail,
              array_agg(DISTINCT regexp_replace(l.route, ${UUID_RE}, ':id', 'g')) AS routes,
              count(DISTINCT m.case_id)::int AS cases,
              CASE WHEN count(DISTINCT m.case_id) = 1 THEN min(m.case_id::text)::uuid END AS one_case
         FROM page p
         JOIN lined m ON m.who = p.who AND m.g = p.g
         JOIN access_log l ON l.id = m.id
        GROUP BY p.who, p.g, p."lastId", p."firstAt", p."lastAt", p.lines
     )
     SELECT d.*, r.return_ref AS "returnRef", t.total
       FROM (SELECT count(*)::int AS total FROM groups) t
       LEFT JOIN described d ON true
       LEFT JOIN exam_case ec ON ec.id = d.one_case
       LEFT JOIN tax_return r ON r.id = ec.return_id
      ORDER BY d."lastAt" DESC, d."lastId" DESC`,
    params,
  );
  // One row holds the total even when the page is past the end (its group fields are then null).
  return { rows: rows.filter((r): r is AccessGroupRow & { total: number } => r.lastId != null), total: rows[0]?.total ?? 0 };
}

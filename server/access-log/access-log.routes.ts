import { AccessLogExportQuerySchema, AccessLogQuerySchema, type AccessLogExportQuery, type AccessLogQuery } from '../../shared/access-log';
import type { AppDeps } from '../app-deps';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import { staffAuditOf } from './audit-context';
import { exportAccessLog, listAccessLog } from './access-log.service';

/**
 * `GET /api/access-log` (admin): one row per thing a person did, filtered by user, taxpayer,
 * date and action; `GET /api/access-log/export.xlsx`: the same rows as a workbook (logged).
 */
export function accessLogRoutes(deps: Pick<AppDeps, 'dataSource'>) {
  const r = secureRouter();
  r.get('/access-log', allow('readAccessLog'), validate(AccessLogQuerySchema, 'query'), async (_req, res) => {
    res.json(await listAccessLog(deps.dataSource, res.locals.query as AccessLogQuery));
  });
  r.get('/access-log/export.xlsx', allow('readAccessLog'), validate(AccessLogExportQuerySchema, 'query'), async (req, res) => {
    const q = res.locals.query as AccessLogExportQuery;
    await exportAccessLog(deps.dataSource, staffAuditOf(req), q, res, () => {
      res.setHeader('Content-Type', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
      res.setHeader('Content-Disposition', `attachment; filename="access-log${q.from ? `-${q.from}` : ''}${q.to ? `-to-${q.to}` : ''}.xlsx"`);
      res.setHeader('Cache-Control', 'no-store');
    });
  });
  return r;
}

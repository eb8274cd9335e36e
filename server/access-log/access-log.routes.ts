import { AccessLogQuerySchema, type AccessLogQuery } from '../../shared/access-log';
import type { AppDeps } from '../app-deps';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import { listAccessLog } from './access-log.service';

/** `GET /api/access-log` (admin): filter by user, taxpayer, date and action. */
export function accessLogRoutes(deps: Pick<AppDeps, 'dataSource'>) {
  const r = secureRouter();
  r.get('/access-log', allow('readAccessLog'), validate(AccessLogQuerySchema, 'query'), async (_req, res) => {
    res.json(await listAccessLog(deps.dataSource, res.locals.query as AccessLogQuery));
  });
  return r;
}

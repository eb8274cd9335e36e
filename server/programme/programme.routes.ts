import { ControlsQuerySchema, OutcomesQuerySchema, type OutcomesQuery } from '../../shared/programme/api';
import type { AppDeps } from '../app-deps';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import { getOutcomes, listControls } from './programme.service';

/**
 * The Programme (issue 17, supervisors): `GET /api/programme/outcomes?from=&to=&batch=` (figures
 * only, no taxpayer data, so not access-logged) and `GET /api/programme/controls?batch=ID` (a
 * batch's random review cases, each logged as viewed).
 */
export function programmeRoutes(deps: Pick<AppDeps, 'dataSource'>) {
  const r = secureRouter();
  const ds = deps.dataSource;
  r.get('/programme/outcomes', allow('readProgramme'), validate(OutcomesQuerySchema, 'query'), async (_req, res) => {
    res.json(await getOutcomes(ds, res.locals.query as OutcomesQuery));
  });
  r.get('/programme/controls', allow('readProgramme'), validate(ControlsQuerySchema, 'query'), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await listControls(ds, staffAuditOf(req), (res.locals.query as { batch: string }).batch));
  });
  return r;
}

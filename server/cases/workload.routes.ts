import type { AppDeps } from '../app-deps';
import { allow, secureRouter } from '../auth/access';
import { getWorkload } from './workload.service';

/** `GET /api/workload` (supervisor): per-examiner counts. */
export function workloadRoutes(deps: Pick<AppDeps, 'dataSource'>) {
  const r = secureRouter();
  r.get('/workload', allow('readWorkload'), async (_req, res) => {
    res.json(await getWorkload(deps.dataSource));
  });
  return r;
}

import type { AppDeps } from '../app-deps';
import { getHealth } from './health.service';
import { publicAccess, secureRouter } from '../auth/access';

/** `GET /api/health`: 200 when everything is up, 503 with reasons otherwise. Public. */
export function healthRoutes(deps: Pick<AppDeps, 'dataSource' | 'boss' | 'mailer'>) {
  const r = secureRouter();
  r.get('/health', publicAccess, async (_req, res) => {
    const health = await getHealth(deps);
    res.status(health.status === 'ok' ? 200 : 503).json(health);
  });
  return r;
}

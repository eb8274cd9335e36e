import type { AppDeps } from '../app-deps';
import { allow, secureRouter } from '../auth/access';
import { runDailyPass } from './housekeeping.service';

/**
 * `POST /api/housekeeping/run` (supervisor, capability runHousekeeping): runs the daily pass
 * now (server/housekeeping/housekeeping.service.ts) → {day, remindersSent, requestsExpired,
 * digestsSent, deadlineWarnings}; a second run the same day answers zeros.
 */
export function housekeepingRoutes(deps: Pick<AppDeps, 'dataSource' | 'mailer'> & { publicUrl: string }) {
  const r = secureRouter();
  r.post('/housekeeping/run', allow('runHousekeeping'), async (_req, res) => {
    res.json(await runDailyPass({ dataSource: deps.dataSource, mailer: deps.mailer, publicUrl: deps.publicUrl }));
  });
  return r;
}

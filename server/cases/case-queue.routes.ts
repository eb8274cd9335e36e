import type { AppDeps } from '../app-deps';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { needsMe } from './case-queue.service';

/**
 * The examiner's start screen (issue 14): how many of the caller's cases need them, by
 * reason. The cases themselves come from the queue (`GET /api/cases?needs=…`), which logs
 * what it shows; these are counts of the caller's own cases, with no taxpayer in them.
 */
export function caseQueueRoutes(deps: Pick<AppDeps, 'dataSource'>) {
  const r = secureRouter();
  const ds = deps.dataSource;

  r.get('/needs-me', allow('readCases'), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await needsMe(ds, staffAuditOf(req).actor));
  });

  return r;
}

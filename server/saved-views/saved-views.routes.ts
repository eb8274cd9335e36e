import { SavedViewCreateSchema } from '../../shared/saved-views';
import type { AppDeps } from '../app-deps';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import { listViews, removeView, saveView } from './saved-views.service';

/** Saved views of the queue (issue 14): the caller's own, for whoever reads the queue. */
export function savedViewRoutes(deps: Pick<AppDeps, 'dataSource'>) {
  const r = secureRouter();
  const ds = deps.dataSource;

  r.get('/saved-views', allow('readCases'), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json({ items: await listViews(ds, staffAuditOf(req).actor.id) });
  });

  r.post('/saved-views', allow('readCases'), validate(SavedViewCreateSchema), async (req, res) => {
    res.status(201).json(await saveView(ds, staffAuditOf(req), req.body));
  });

  r.delete('/saved-views/:id', allow('readCases'), async (req, res) => {
    await removeView(ds, staffAuditOf(req), String(req.params.id));
    res.status(204).end();
  });

  return r;
}

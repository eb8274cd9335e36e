import { PreviewRequestSchema } from '../../shared/programme/api';
import { NewProfileSchema, RescoreSchema } from '../../shared/scoring/profile-api';
import type { AppDeps } from '../app-deps';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { HttpError } from '../http/errors';
import { validate } from '../http/validate';
import { previewSelection } from '../programme/programme.service';
import { activateProfile, addProfile, factorPerformance, listProfiles, rescoreBatch } from './scoring-profile.service';

/** Scoring profiles (read: examiners and supervisors; change: supervisors). */
export function scoringProfileRoutes(deps: Pick<AppDeps, 'dataSource' | 'boss'>) {
  const r = secureRouter();
  const ds = deps.dataSource;
  r.get('/scoring/profiles', allow('readScoring'), async (_req, res) => {
    res.json({ items: await listProfiles(ds) });
  });
  r.post('/scoring/profiles', allow('editScoring'), validate(NewProfileSchema), async (req, res) => {
    res.status(201).json(await addProfile(ds, staffAuditOf(req), req.body));
  });
  r.post('/scoring/profiles/:version/activate', allow('editScoring'), async (req, res) => {
    const v = Number(req.params.version);
    if (!Number.isInteger(v) || v < 1) throw new HttpError(404, 'No such scoring profile version.');
    await activateProfile(ds, staffAuditOf(req), v);
    res.status(204).end();
  });
  r.get('/scoring/performance', allow('editScoring'), async (_req, res) => {
    res.json(await factorPerformance(ds));
  });
  // The preview is the Programme's selection rule run on a scored batch, saving nothing.
  r.post('/scoring/preview', allow('editScoring'), validate(PreviewRequestSchema), async (req, res) => {
    res.json(await previewSelection(ds, req.body));
  });
  r.post('/batches/:id/rescore', allow('editScoring'), validate(RescoreSchema), async (req, res) => {
    res.status(202).json(await rescoreBatch(ds, deps.boss, staffAuditOf(req), String(req.params.id), req.body.version));
  });
  return r;
}

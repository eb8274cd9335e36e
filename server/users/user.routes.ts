import { CreateUserSchema, ResetPasswordSchema, UpdateUserSchema } from '../../shared/users';
import type { AppDeps } from '../app-deps';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import type { LoginThrottle } from '../auth/throttle';
import { createUser, getUsers, resetPassword, unlockUser, updateUser } from './user.service';

/** User administration (admin only); the throttle tells which accounts are locked and unlocks them. */
export function userRoutes(deps: Pick<AppDeps, 'dataSource'> & { throttle: LoginThrottle }) {
  const r = secureRouter();
  const ds = deps.dataSource;
  r.get('/users', allow('manageUsers'), async (_req, res) => {
    res.json({ items: await getUsers(ds, deps.throttle) });
  });
  r.post('/users/:id/unlock', allow('manageUsers'), async (req, res) => {
    res.json(await unlockUser(ds, staffAuditOf(req), deps.throttle, String(req.params.id)));
  });
  r.post('/users', allow('manageUsers'), validate(CreateUserSchema), async (req, res) => {
    res.status(201).json(await createUser(ds, staffAuditOf(req), req.body));
  });
  r.patch('/users/:id', allow('manageUsers'), validate(UpdateUserSchema), async (req, res) => {
    res.json(await updateUser(ds, staffAuditOf(req), String(req.params.id), req.body));
  });
  r.post('/users/:id/password', allow('manageUsers'), validate(ResetPasswordSchema), async (req, res) => {
    await resetPassword(ds, staffAuditOf(req), String(req.params.id), req.body.password);
    res.status(204).end();
  });
  return r;
}

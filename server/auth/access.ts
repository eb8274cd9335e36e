/**
 * Who may call what: every API route states its rule as its first handler, through
 * {@link secureRouter}. A route registered without a rule throws at start-up, and
 * tests/api/route-policy.test.ts walks every registered route against every role.
 *
 * Rules follow docs/design.md#roles (need-to-know): clerk — batches; examiner — cases
 * (read, claim, own cases' actions), analyses; supervisor — everything an examiner may, on
 * every case, plus assign, export, scoring profiles, batches (read); admin — users and the
 * access log, but no taxpayer data.
 */
import { Router, type RequestHandler } from 'express';
import { CAN, type Capability } from '../../shared/permissions';
import type { Role } from '../../shared/roles';
import { HttpError } from '../http/errors';
import type {} from 'passport';

/** The signed-in user as the server sees it. */
export interface SessionUser {
  id: string;
  username: string;
  displayName: string;
  role: Role;
}

declare global {
  namespace Express {
    // passport's req.user

    interface User extends SessionUser {}
  }
}

/** A route's access rule. */
export type AccessRule = { kind: 'public' } | { kind: 'roles'; roles: readonly Role[] };

const RULE = Symbol('plumbline.accessRule');
type RuleHandler = RequestHandler & { [RULE]: AccessRule };

function tag(handler: RequestHandler, rule: AccessRule): RuleHandler {
  return Object.assign(handler, { [RULE]: rule });
}

/** Only these roles (signed in, active). 401 when signed out, 403 for any other role. */
export function access(...roles: Role[]): RequestHandler {
  if (roles.length === 0) throw new Error('access() needs at least one role; use publicAccess for open routes');
  return tag(
    (req, _res, next) => {
      if (!req.user) return next(new HttpError(401, 'Please sign in.'));
      if (!roles.includes(req.user.role)) {
        return next(new HttpError(403, `Your role (${req.user.role}) may not do this.`));
      }
      next();
    },
    { kind: 'roles', roles },
  );
}

/** Only the roles that hold a capability in the policy table (shared/permissions.ts). */
export function allow(capability: Capability): RequestHandler {
  return access(...CAN[capability]);
}

/** Open to anyone (health, sign-in, a taxpayer's one-time reply link). */
export const publicAccess: RequestHandler = tag((_req, _res, next) => next(), { kind: 'public' });

/** The rule a handler carries, if any. */
export function ruleOf(handler: unknown): AccessRule | undefined {
  return typeof handler === 'function' ? (handler as Partial<RuleHandler>)[RULE] : undefined;
}

const METHODS = ['get', 'post', 'put', 'patch', 'delete'] as const;

/**
 * An Express router whose routes must each start with an access rule
 * (`r.get('/batches', access('clerk', 'supervisor'), handler)`). Paths are full paths
 * under /api, and the router is mounted without a path (`api.use(router)`).
 */
export function secureRouter(): Router {
  const router = Router();
  for (const m of METHODS) {
    const original = router[m].bind(router) as (path: string, ...handlers: RequestHandler[]) => Router;
    (router as unknown as Record<string, unknown>)[m] = (path: string, ...handlers: RequestHandler[]) => {
      if (!ruleOf(handlers[0])) {
        throw new Error(`Route ${m.toUpperCase()} /api${path} has no access rule: start its handlers with access(...) or publicAccess.`);
      }
      return original(path, ...handlers);
    };
  }
  return router;
}

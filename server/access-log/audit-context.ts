/**
 * Who is acting and through which route, for access-log lines. The {@link auditContext}
 * middleware reads both from the request once; routes hand the context to services, which
 * pass it to recordAccess. Services therefore never build URL strings, and a service called
 * from another route (bulk reassignment calls the per-case assignment) logs the route the
 * person really called.
 */
import type { Request, RequestHandler } from 'express';
import type { SessionUser } from '../auth/access';
import { HttpError, routeOf } from '../http/errors';

/** The user fields an access-log line keeps. */
export type Actor = Pick<SessionUser, 'id' | 'username' | 'role'>;

/** Who acts (null: nobody signed in, e.g. a refused sign-in or a taxpayer's reply link) and the route, "METHOD /api/path". */
export interface AuditContext {
  actor: Actor | null;
  route: string;
}

/** The audit context of a signed-in member of staff; services that act for staff take this. */
export interface StaffAudit extends AuditContext {
  actor: SessionUser;
}

declare global {
  namespace Express {
    interface Request {
      /** Set by {@link auditContext}. */
      audit?: AuditContext;
    }
  }
}

/**
 * Route parameters that are keys (a reply link's token): a route with one is logged by its
 * pattern ("GET /api/replies/:token"), never the path called, which would put a live key in
 * the access log.
 */
const SECRET_PARAMS: readonly string[] = ['token'];

/**
 * Records the caller and route on the request (mounted after the session, so a signed-in
 * user is known). The route is the path actually called, without its query string; see
 * {@link auditOf} for routes whose path holds a key.
 */
export const auditContext: RequestHandler = (req, _res, next) => {
  req.audit = { actor: req.user ?? null, route: `${req.method} ${req.originalUrl.split('?')[0]}` };
  next();
};

/**
 * The request's audit context (anonymous when nobody is signed in). Called from a route's
 * handlers, when the matched route is known: a route with a {@link SECRET_PARAMS} parameter
 * is named by its pattern instead of the path called.
 */
export function auditOf(req: Request): AuditContext {
  if (!req.audit) throw new Error('auditContext middleware is not mounted before this route');
  if (req.route && SECRET_PARAMS.some((p) => p in req.params)) return { ...req.audit, route: routeOf(req) };
  return req.audit;
}

/** The request's audit context for a staff route (its access rule has already required a signed-in user). */
export function staffAuditOf(req: Request): StaffAudit {
  const a = auditOf(req);
  if (!req.user) throw new HttpError(401, 'Please sign in.');
  return { actor: req.user, route: a.route };
}

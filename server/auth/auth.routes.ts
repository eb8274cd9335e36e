import type { Request, RequestHandler } from 'express';
import type { PassportStatic } from 'passport';
import { LoginRequestSchema, type SessionResponse } from '../../shared/auth';
import { ROLES } from '../../shared/roles';
import { recordAccess } from '../access-log/access-log.service';
import type { AppDeps } from '../app-deps';
import { auditOf } from '../access-log/audit-context';
import { HttpError } from '../http/errors';
import { validate } from '../http/validate';
import { access, publicAccess, secureRouter, type SessionUser } from './access';
import { verifyCredentials } from './auth.service';
import { csrfTokenFor } from './csrf';
import { SESSION_COOKIE } from './session';
import type { LoginThrottle } from './throttle';

/** Any signed-in staff member. */
export const signedIn = access(...ROLES);

function logIn(req: Request, user: SessionUser): Promise<void> {
  // passport regenerates the session on login, so a fixed session id cannot be reused.
  return new Promise((resolve, reject) => req.logIn(user, (err) => (err ? reject(err) : resolve())));
}

function answer(req: Request): SessionResponse {
  return { user: req.user!, csrfToken: csrfTokenFor(req) };
}

/** Sign-in, sign-out and `me`. */
export function authRoutes(deps: Pick<AppDeps, 'dataSource'> & { throttle: LoginThrottle; passport: PassportStatic }) {
  const r = secureRouter();
  const ds = deps.dataSource;

  // JSON only: a page on another site can post a form (urlencoded, multipart or text/plain)
  // to this route without a preflight and sign the browser in to an account of its choosing
  // (login CSRF); a cross-site application/json request needs a CORS preflight we never grant.
  const jsonOnly: RequestHandler = (req, _res, next) => {
    if (!req.is('application/json')) return next(new HttpError(415, 'Sign-in takes a JSON body (Content-Type: application/json) with username and password.'));
    next();
  };

  r.post('/auth/login', publicAccess, jsonOnly, validate(LoginRequestSchema), async (req, res) => {
    const { username, password } = req.body as { username: string; password: string };
    const address = req.ip ?? 'unknown';
    const attempt = await deps.throttle.begin(username, address);
    if ('scope' in attempt) {
      const blocked = attempt;
      const minutes = Math.ceil(blocked.retryAfterSeconds / 60);
      res.setHeader('Retry-After', String(blocked.retryAfterSeconds));
      throw new HttpError(
        429,
        blocked.scope === 'account'
          ? `Too many failed sign-ins for this account. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}, or ask an administrator to reset the password.`
          : `Too many failed sign-ins from this computer. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`,
      );
    }
    const check = await verifyCredentials(ds, username, password);
    if (!check.ok) {
      await recordAccess(
        ds,
        { ...auditOf(req), actor: null },
        {
          action: 'sign-in-refused',
          detail: `user name "${username.slice(0, 64)}": ${check.reason === 'inactive' ? 'account deactivated' : 'wrong user name or password'}`,
        },
      );
      throw new HttpError(401, check.reason === 'inactive' ? 'This account is deactivated. Ask an administrator.' : 'The user name or password is wrong.');
    }
    await deps.throttle.succeed(username, address);
    await logIn(req, check.user);
    await recordAccess(ds, { ...auditOf(req), actor: check.user }, { action: 'sign-in', recordType: 'user', recordId: check.user.id });
    res.json(answer(req));
  });

  r.post('/auth/logout', signedIn, async (req, res) => {
    const user = req.user!;
    await recordAccess(ds, auditOf(req), { action: 'sign-out', recordType: 'user', recordId: user.id });
    await new Promise<void>((resolve, reject) => req.logout((err) => (err ? reject(err) : resolve())));
    await new Promise<void>((resolve) => req.session.destroy(() => resolve()));
    res.clearCookie(SESSION_COOKIE);
    res.status(204).end();
  });

  r.get('/auth/me', signedIn, (req, res) => {
    res.json(answer(req));
  });
  return r;
}

/**
 * CSRF protection for cookie-authenticated requests: a random token per session, given out
 * by login and `me`, required in the X-CSRF-Token header on every state-changing request
 * of a signed-in user (synchroniser-token pattern, OWASP CSRF Prevention Cheat Sheet).
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { CSRF_HEADER } from '../../shared/auth';
import { HttpError } from '../http/errors';

const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

/** The session's token, created on first use. */
export function csrfTokenFor(req: Request): string {
  if (!req.session.csrfToken) req.session.csrfToken = randomBytes(32).toString('base64url');
  return req.session.csrfToken;
}

/** Rejects state-changing requests of a signed-in session without the right token. */
export const csrfProtection: RequestHandler = (req, _res, next) => {
  if (SAFE.has(req.method) || !req.user) return next();
  const sent = req.get(CSRF_HEADER) ?? '';
  const expected = req.session.csrfToken ?? '';
  const ok = sent.length > 0 && sent.length === expected.length && timingSafeEqual(Buffer.from(sent), Buffer.from(expected));
  if (!ok) return next(new HttpError(403, `Missing or out-of-date security token (${CSRF_HEADER}). Reload the page and try again.`));
  next();
};

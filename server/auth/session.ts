/**
 * Cookie sessions stored in PostgreSQL (table user_session, created by a migration) and
 * passport's local strategy.
 */
import connectPgSimple from 'connect-pg-simple';
import type { RequestHandler } from 'express';
import session from 'express-session';
import passport, { type PassportStatic } from 'passport';
import type { Pool } from 'pg';
import type { DataSource } from 'typeorm';
import type { Config } from '../config';
import { findUserById } from '../users/user.repository';
import type { SessionUser } from './access';

declare module 'express-session' {
  interface SessionData {
    csrfToken?: string;
  }
}

/** The session cookie's name. */
export const SESSION_COOKIE = 'plumbline.sid';

/** express-session backed by PostgreSQL. */
export function sessionMiddleware(config: Config, ds: DataSource): RequestHandler {
  const PgStore = connectPgSimple(session);
  // Share TypeORM's pool rather than opening a second one.
  const pool = (ds.driver as unknown as { master: Pool }).master;
  const store = new PgStore({
    pool,
    tableName: 'user_session',
    createTableIfMissing: false,
    // Expired rows are pruned by the store; off in tests so no timer outlives the pool.
    pruneSessionInterval: config.NODE_ENV === 'test' ? false : 15 * 60,
  });
  return session({
    name: SESSION_COOKIE,
    secret: config.SESSION_SECRET,
    store,
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: {
      httpOnly: true,
      sameSite: 'lax',
      secure: config.publicUrl.startsWith('https://'),
      maxAge: config.SESSION_TTL_SECONDS * 1000,
    },
  });
}

/**
 * A passport instance for this app (not the global one, so several apps in one test
 * process do not share strategies). The user is re-read on every request so a
 * deactivation or role change takes effect at once.
 */
export function createPassport(ds: DataSource): PassportStatic {
  const p = new passport.Passport() as unknown as PassportStatic;
  p.serializeUser((user, done) => done(null, (user as SessionUser).id));
  p.deserializeUser((id: string, done) => {
    findUserById(ds, id).then(
      (u) => done(null, u && u.active ? ({ id: u.id, username: u.username, displayName: u.displayName, role: u.role } satisfies SessionUser) : false),
      (e) => done(e),
    );
  });
  return p;
}

/**
 * Checking a user name and password. The same work is done whether or not the user
 * exists, so response time does not reveal which user names are real.
 */
import bcrypt from 'bcryptjs';
import type { DataSource } from 'typeorm';
import { findUserWithHash } from '../users/user.repository';
import type { SessionUser } from './access';

// A hash of a random string: compared against when the user does not exist.
const DUMMY_HASH = bcrypt.hashSync('plumbline-no-such-user-' + Math.random(), 10);

/** Outcome of a sign-in attempt. */
export type CredentialCheck = { ok: true; user: SessionUser } | { ok: false; reason: 'wrong' | 'inactive' };

export async function verifyCredentials(ds: DataSource, username: string, password: string): Promise<CredentialCheck> {
  const u = await findUserWithHash(ds, username);
  const matches = await bcrypt.compare(password, u?.passwordHash ?? DUMMY_HASH);
  if (!u || !u.passwordHash || !matches) return { ok: false, reason: 'wrong' };
  if (!u.active) return { ok: false, reason: 'inactive' };
  return { ok: true, user: { id: u.id, username: u.username, displayName: u.displayName, role: u.role } };
}

/**
 * Staff accounts: creation, role changes, deactivation, password resets. Every change is
 * written to the access log in the same transaction.
 */
import bcrypt from 'bcryptjs';
import type { DataSource } from 'typeorm';
import type { CreateUserInput, UpdateUserInput, UserDto } from '../../shared/users';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { HttpError } from '../http/errors';
import type { LoginThrottle } from '../auth/throttle';
import type { User } from './user.entity';
import { deleteSessionsOf, findUserById, insertUser, listUsers, setPasswordHash, updateUserFields, userNameTaken } from './user.repository';

/** bcrypt cost: ~60 ms a hash on this class of machine (common practice, no source). */
export const BCRYPT_ROUNDS = 10;

/** How locks are read: the sign-in throttle, or none (then no account shows as locked). */
export type LockSource = Pick<LoginThrottle, 'accountLockedFor'> | null;

/** A user as the API shows it; `lockedForSeconds` from the sign-in throttle (null: not locked). */
export function toUserDto(u: User, lockedForSeconds: number | null = null): UserDto {
  return {
    id: u.id,
    username: u.username,
    displayName: u.displayName,
    role: u.role,
    active: u.active,
    createdAt: u.createdAt.toISOString(),
    lockedForSeconds,
  };
}

export async function getUsers(ds: DataSource, locks: LockSource = null): Promise<UserDto[]> {
  const users = await listUsers(ds);
  return Promise.all(users.map(async (u) => toUserDto(u, (await locks?.accountLockedFor(u.username)) ?? null)));
}

/**
 * Lets a locked account sign in again at once (the sign-in throttle forgets its failed
 * attempts), logged as a change. Unlocking an account that is not locked changes nothing and
 * is not logged, so a second click does no harm.
 */
export async function unlockUser(ds: DataSource, audit: StaffAudit, throttle: LoginThrottle, id: string): Promise<UserDto> {
  const user = await findUserById(ds, id);
  if (!user) throw new HttpError(404, 'No such user.');
  if (await throttle.unlockAccount(user.username))
    await recordAccess(ds, audit, { action: 'change', recordType: 'user', recordId: id, detail: `${user.username}: unlocked after failed sign-ins` });
  return toUserDto(user, await throttle.accountLockedFor(user.username));
}

export async function createUser(ds: DataSource, audit: StaffAudit, input: CreateUserInput): Promise<UserDto> {
  const hash = await bcrypt.hash(input.password, BCRYPT_ROUNDS);
  return ds.transaction(async (m) => {
    if (await userNameTaken(m, input.username)) throw new HttpError(409, `The user name "${input.username}" is taken; choose another.`);
    const saved = await insertUser(m, input, hash);
    await recordAccess(m, audit, { action: 'change', recordType: 'user', recordId: saved.id, detail: `created ${input.username} as ${input.role}` });
    return toUserDto(saved);
  });
}

export async function updateUser(ds: DataSource, audit: StaffAudit, id: string, input: UpdateUserInput): Promise<UserDto> {
  const user = await findUserById(ds, id);
  if (!user) throw new HttpError(404, 'No such user.');
  if (user.id === audit.actor.id && (input.active === false || (input.role && input.role !== 'admin'))) {
    // An office must never lock itself out of its own user administration by accident.
    throw new HttpError(409, 'You cannot deactivate yourself or remove your own administrator role; ask another administrator.');
  }
  return ds.transaction(async (m) => {
    const updated = await updateUserFields(m, id, input);
    const changes = Object.entries(input)
      .map(([k, v]) => `${k}=${v}`)
      .join(', ');
    await recordAccess(m, audit, { action: 'change', recordType: 'user', recordId: id, detail: `${user.username}: ${changes}` });
    if (input.active === false) {
      // Signing out a deactivated user everywhere: drop their sessions.
      await deleteSessionsOf(m, id);
    }
    return toUserDto(updated);
  });
}

export async function resetPassword(ds: DataSource, audit: StaffAudit, id: string, password: string): Promise<void> {
  const user = await findUserById(ds, id);
  if (!user) throw new HttpError(404, 'No such user.');
  const hash = await bcrypt.hash(password, BCRYPT_ROUNDS);
  await ds.transaction(async (m) => {
    await setPasswordHash(m, id, hash);
    await deleteSessionsOf(m, id);
    await recordAccess(m, audit, { action: 'change', recordType: 'user', recordId: id, detail: `password reset for ${user.username}` });
  });
}

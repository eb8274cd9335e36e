/** Queries on staff accounts. */
import type { DataSource, EntityManager } from 'typeorm';
import type { CreateUserInput, UpdateUserInput } from '../../shared/users';
import { User } from './user.entity';
import { isUuid } from '../../shared/ids';

/** The user with its password hash (normally not selected), for sign-in only. */
export function findUserWithHash(ds: DataSource, username: string): Promise<User | null> {
  return ds.getRepository(User).createQueryBuilder('u').addSelect('u.passwordHash').where('u.username = :username', { username }).getOne();
}

export function findUserById(ds: DataSource, id: string): Promise<User | null> {
  if (!isUuid(id)) return Promise.resolve(null);
  return ds.getRepository(User).findOneBy({ id });
}

export function listUsers(ds: DataSource): Promise<User[]> {
  return ds.getRepository(User).find({ order: { role: 'ASC', username: 'ASC' } });
}

/** True when the user name is taken. */
export function userNameTaken(m: EntityManager, username: string): Promise<boolean> {
  return m.getRepository(User).existsBy({ username });
}

/** Stores a new active user with a password hash. */
export function insertUser(m: EntityManager, input: Omit<CreateUserInput, 'password'>, passwordHash: string): Promise<User> {
  const repo = m.getRepository(User);
  return repo.save(repo.create({ username: input.username, displayName: input.displayName, role: input.role, passwordHash, active: true }));
}

/** Changes a user's name, role or active flag; returns the user as stored. */
export async function updateUserFields(m: EntityManager, id: string, input: UpdateUserInput): Promise<User> {
  await m.getRepository(User).update({ id }, input);
  return m.getRepository(User).findOneByOrFail({ id });
}

/** Replaces a user's password hash. */
export async function setPasswordHash(m: EntityManager, id: string, passwordHash: string): Promise<void> {
  await m.getRepository(User).update({ id }, { passwordHash });
}

/** Ends every session of a user (deactivation, password reset). */
export async function deleteSessionsOf(m: EntityManager, userId: string): Promise<void> {
  await m.query(`DELETE FROM user_session WHERE sess::jsonb #>> '{passport,user}' = $1`, [userId]);
}

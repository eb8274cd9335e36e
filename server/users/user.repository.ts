/** Queries on staff accounts. */
import type { DataSource } from 'typeorm';
import { User } from './user.entity';
import { isUuid } from '../../shared/ids';

/** The user with its password hash (normally not selected), for sign-in only. */
export function findUserWithHash(ds: DataSource, username: string): Promise<User | null> {
  return ds
    .getRepository(User)
    .createQueryBuilder('u')
    .addSelect('u.passwordHash')
    .where('u.username = :username', { username })
    .getOne();
}

export function findUserById(ds: DataSource, id: string): Promise<User | null> {
  if (!isUuid(id)) return Promise.resolve(null);
  return ds.getRepository(User).findOneBy({ id });
}

export function listUsers(ds: DataSource): Promise<User[]> {
  return ds.getRepository(User).find({ order: { role: 'ASC', username: 'ASC' } });
}

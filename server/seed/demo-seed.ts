/**
 * Demo data for `npm start`: the Aldermere staff accounts (password `plumbline-demo`, for
 * demonstration only) and, once intake exists, a demo filing batch. Idempotent.
 */
import bcrypt from 'bcryptjs';
import type { DataSource } from 'typeorm';
import type { Role } from '../../shared/roles';
import { User } from '../users/user.entity';

/** The demo password (README says: demo only, change before real use). */
export const DEMO_PASSWORD = 'plumbline-demo';

/** Demo accounts from DESIGN.md section 10; names invented. */
export const DEMO_ACCOUNTS: { username: string; displayName: string; role: Role }[] = [
  { username: 'clerk', displayName: 'Tamsin Orlo (intake)', role: 'clerk' },
  { username: 'examiner', displayName: 'Ivo Brackley', role: 'examiner' },
  { username: 'examiner2', displayName: 'Nell Quarrender', role: 'examiner' },
  { username: 'supervisor', displayName: 'Maud Fennick', role: 'supervisor' },
  { username: 'admin', displayName: 'Osric Pell (systems)', role: 'admin' },
];

/** Creates missing demo accounts; leaves existing ones (and changed passwords) alone. */
export async function seedDemoAccounts(ds: DataSource): Promise<number> {
  const repo = ds.getRepository(User);
  let created = 0;
  const hash = await bcrypt.hash(DEMO_PASSWORD, 10);
  for (const a of DEMO_ACCOUNTS) {
    const exists = await repo.exists({ where: { username: a.username } });
    if (exists) continue;
    await repo.insert({ ...a, passwordHash: hash, active: true });
    created++;
  }
  return created;
}

/** Everything the demo needs. Returns a line for the start command to print. */
export async function seedDemo(ds: DataSource): Promise<string> {
  const accounts = await seedDemoAccounts(ds);
  return accounts ? `created ${accounts} demo accounts` : 'demo accounts present';
}

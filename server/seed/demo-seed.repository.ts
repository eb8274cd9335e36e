/**
 * The demo seed's own questions to the database. The accounts themselves are stored through
 * server/users/user.repository.ts like any other account, and the demo batch through the
 * batch intake like any upload.
 */
import { FilingBatch } from '../batches/filing-batch.entity';
import type { Db } from '../db/db';
import { User } from '../users/user.entity';

/** True when any filing batch is on file: the demo batch is loaded only into an empty office. */
export function anyBatchOnFile(db: Db): Promise<boolean> {
  return db.getRepository(FilingBatch).exists();
}

/** The id of the account with this user name, or null when there is none. */
export async function accountIdByUsername(db: Db, username: string): Promise<string | null> {
  const user = await db.getRepository(User).findOne({ where: { username }, select: { id: true } });
  return user?.id ?? null;
}

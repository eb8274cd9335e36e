/** Storage of saved views (issue 14): one person's rows at a time. */
import type { SavedViewFilters } from '../../shared/saved-views';
import type { Db } from '../db/db';
import { returnedRows } from '../db/returned-rows';
import type { SavedViewRecord } from './saved-view.entity';

type Row = Pick<SavedViewRecord, 'id' | 'name' | 'filters' | 'createdAt'>;
const COLUMNS = `id, name, filters, created_at AS "createdAt"`;

/**
 * Locks the person's account row until the caller's transaction ends, so two saves by one
 * person run one after the other and cannot both pass the count. Call inside a transaction.
 */
export async function lockViewsOf(db: Db, userId: string): Promise<void> {
  await db.query(`SELECT id FROM app_user WHERE id = $1 FOR UPDATE`, [userId]);
}

/** A person's views, oldest first. */
export async function findViews(db: Db, userId: string): Promise<Row[]> {
  return db.query(`SELECT ${COLUMNS} FROM saved_view WHERE user_id = $1 ORDER BY created_at, id`, [userId]);
}

/** How many views a person keeps. */
export async function countViews(db: Db, userId: string): Promise<number> {
  return (await db.query(`SELECT count(*)::int AS n FROM saved_view WHERE user_id = $1`, [userId]))[0].n;
}

/** Stores a view; null when the person already has one by that name (any case). */
export async function insertView(db: Db, userId: string, name: string, filters: SavedViewFilters): Promise<Row | null> {
  const rows: Row[] = await db.query(
    `INSERT INTO saved_view (user_id, name, filters) VALUES ($1, $2, $3::jsonb)
     ON CONFLICT (user_id, lower(name)) DO NOTHING RETURNING ${COLUMNS}`,
    [userId, name, JSON.stringify(filters)],
  );
  return rows[0] ?? null;
}

/** Deletes one of the person's views; false when they have none with this id. */
export async function deleteView(db: Db, userId: string, id: string): Promise<boolean> {
  const rows = returnedRows(await db.query(`DELETE FROM saved_view WHERE id = $1 AND user_id = $2 RETURNING id`, [id, userId]));
  return rows.length > 0;
}

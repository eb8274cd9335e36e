/**
 * All SQL of the sign-in throttle (table `login_throttle`). Every instant is a number of
 * milliseconds by the office clock, passed in by the caller (server/auth/throttle.ts), never
 * PostgreSQL's `now()` or the process's own clock, so tests that move the office clock move
 * the throttle's windows too.
 */
import type { Db } from '../db/db';
import { returnedRows } from '../db/returned-rows';

/** A key's count in its current window. */
export interface ThrottleCount {
  points: number;
  /** End of the window (ms by the office clock), or null for a count that never expires. */
  expire: number | null;
}

interface RawCount {
  points: number;
  expire: string | null;
}

function toCount(r: RawCount): ThrottleCount {
  // bigint arrives from pg as a string; the values are milliseconds, well inside 2^53.
  return { points: Number(r.points), expire: r.expire === null ? null : Number(r.expire) };
}

/**
 * Adds `points` (negative to take back) to a key's count in one statement, and returns the
 * count after it. A window that has ended (expire <= now) starts again with `points` and
 * `newExpire`; `forceExpire` starts it again whatever its state. Two processes adding to one
 * key at once are serialised by the row's lock, so each gets a different count back. A count
 * never goes below 0 (a take-back that meets a fresh window takes nothing).
 */
export async function addThrottlePoints(
  db: Db,
  key: string,
  points: number,
  newExpire: number | null,
  nowMs: number,
  forceExpire: boolean,
): Promise<ThrottleCount> {
  const rows = returnedRows<RawCount>(
    await db.query(
      `INSERT INTO login_throttle (key, points, expire) VALUES ($1, GREATEST($2::integer, 0), $3)
       ON CONFLICT (key) DO UPDATE SET
         points = CASE
                    WHEN $5::boolean OR login_throttle.expire <= $4 THEN GREATEST($2::integer, 0)
                    ELSE GREATEST(login_throttle.points + $2::integer, 0)
                  END,
         expire = CASE
                    WHEN $5::boolean OR login_throttle.expire <= $4 THEN $3::bigint
                    ELSE login_throttle.expire
                  END
       RETURNING points, expire`,
      [key, points, newExpire, nowMs, forceExpire],
    ),
  );
  return toCount(rows[0]);
}

/** A key's count while its window lasts, or null when it has none. */
export async function findThrottleCount(db: Db, key: string, nowMs: number): Promise<ThrottleCount | null> {
  const rows = returnedRows<RawCount>(
    await db.query(`SELECT points, expire FROM login_throttle WHERE key = $1 AND (expire > $2 OR expire IS NULL)`, [key, nowMs]),
  );
  return rows.length ? toCount(rows[0]) : null;
}

/** Forgets a key's count. @returns true when there was one */
export async function deleteThrottleCount(db: Db, key: string): Promise<boolean> {
  return returnedRows(await db.query(`DELETE FROM login_throttle WHERE key = $1 RETURNING key`, [key])).length > 0;
}

/** Removes counts whose window ended before `beforeMs`; they count for nothing. @returns how many */
export async function deleteExpiredThrottleCounts(db: Db, beforeMs: number): Promise<number> {
  return returnedRows(await db.query(`DELETE FROM login_throttle WHERE expire < $1 RETURNING key`, [beforeMs])).length;
}

/**
 * TypeORM's `query()` on PostgreSQL answers `UPDATE … RETURNING` (and DELETE) with
 * `[rows, affectedCount]`, but `INSERT … RETURNING` and SELECT with the rows alone. This
 * gives the rows either way.
 */
export function returnedRows<T>(result: unknown): T[] {
  if (Array.isArray(result) && result.length === 2 && Array.isArray(result[0]) && typeof result[1] === 'number') return result[0] as T[];
  return result as T[];
}

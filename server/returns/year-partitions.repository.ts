/**
 * The tax-year partitions of line_item and return_score (docs/design.md#partitions-by-tax-year):
 * made by the database function `ensure_tax_year_partitions` (its migration says how), asked
 * for here before rows of a year are written, so they never land in the DEFAULT partitions.
 */
import type { Db } from '../db/db';

/**
 * Makes the line_item and return_score partitions of each year that lacks them. Cheap when
 * they exist (a catalogue look-up, no lock), so callers ask every time. Call it outside a
 * long transaction: making a partition takes a short lock on the parent tables, which should
 * be let go at once rather than held until a batch commits.
 * @returns the years whose partitions were made now
 */
export async function ensureYearPartitions(db: Db, years: Iterable<number>): Promise<number[]> {
  const list = [...new Set(years)].sort((a, b) => a - b);
  if (!list.length) return [];
  const rows: { year: number; made: boolean }[] = await db.query(
    `SELECT y AS year, ensure_tax_year_partitions(y) AS made FROM unnest($1::smallint[]) AS y ORDER BY y`,
    [list],
  );
  return rows.filter((r) => r.made).map((r) => Number(r.year));
}

/** One partition of a year-partitioned table, with its year (null for DEFAULT). */
export interface YearPartition {
  table: 'line_item' | 'return_score';
  partition: string;
  year: number | null;
}

/** The partitions attached now, by table and year (DEFAULT last). */
export async function listYearPartitions(db: Db): Promise<YearPartition[]> {
  const rows: { table: YearPartition['table']; partition: string; bound: string }[] = await db.query(
    `SELECT p.relname AS "table", c.relname AS partition, pg_get_expr(c.relpartbound, c.oid) AS bound
       FROM pg_inherits i JOIN pg_class c ON c.oid = i.inhrelid JOIN pg_class p ON p.oid = i.inhparent
      WHERE p.relname IN ('line_item', 'return_score') AND p.relnamespace = 'public'::regnamespace
      ORDER BY p.relname, c.relname`,
  );
  return rows.map((r) => {
    const m = /IN \('?(\d+)'?\)/.exec(r.bound);
    return { table: r.table, partition: r.partition, year: m ? Number(m[1]) : null };
  });
}

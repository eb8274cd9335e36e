/**
 * The tax-year partitions of line_item and return_score (docs/design.md#partitions-by-tax-year):
 * made by the database function `ensure_tax_year_partitions` (its migration says how), asked
 * for here before rows of a year are written, so they never land in the DEFAULT partitions.
 */
import type { DataSource } from 'typeorm';
import type { Db } from '../db/db';
import { ident } from '../db/roles';

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

/** Why a year could not be detached, in words for the operator. */
export class DetachYearRefused extends Error {}

/** What `detachYear` did: the archive tables made and the rows each holds. */
export interface DetachedYear {
  year: number;
  tables: { table: string; rows: number }[];
}

/**
 * Takes a tax year's partitions out of line_item and return_score (docs/operations.md#archiving-a-tax-year)
 * and renames them `archive_line_item_y<year>` and `archive_return_score_y<year>`: plain tables an
 * office dumps and drops when it likes. The year's returns stay in tax_return; their lines and
 * scores are then only in the archive. Renamed so that a late return of that year gets fresh,
 * empty partitions instead of landing in DEFAULT. All or nothing, in one transaction, run as
 * the owner (the application may not change the schema).
 * @throws DetachYearRefused when the year has no partitions, or cases still refer to its
 *   scores (a case's score is kept for as long as the case: exam_case's foreign key)
 */
export async function detachYear(ds: DataSource, year: number): Promise<DetachedYear> {
  return ds.transaction(async (m) => {
    const parts = (await listYearPartitions(m)).filter((p) => p.year === year);
    if (!parts.length) {
      throw new DetachYearRefused(`There are no partitions of ${year} (see \`npm run db -- psql\`, \\d+ line_item). Nothing was changed.`);
    }
    const [{ n }] = await m.query(`SELECT count(*)::int AS n FROM exam_case WHERE tax_year = $1`, [year]);
    if (n > 0) {
      throw new DetachYearRefused(
        `${n} examination case${n === 1 ? '' : 's'} of ${year} still refer to that year's scores; a case keeps its score, so the year stays. Nothing was changed.`,
      );
    }
    const tables: DetachedYear['tables'] = [];
    for (const p of parts) {
      const archive = `archive_${p.partition}`;
      await m.query(`ALTER TABLE ${ident(p.table)} DETACH PARTITION ${ident(p.partition)}`);
      await m.query(`ALTER TABLE ${ident(p.partition)} RENAME TO ${ident(archive)}`);
      const [{ rows }] = await m.query(`SELECT count(*)::int AS rows FROM ${ident(archive)}`);
      tables.push({ table: archive, rows });
    }
    return { year, tables };
  });
}

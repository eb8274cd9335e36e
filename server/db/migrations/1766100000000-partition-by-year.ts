import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * line_item and return_score partitioned by tax year (issue 16), so an office can archive or
 * drop an old year by partition (docs/design.md#partitions-by-tax-year,
 * docs/operations.md#archiving-a-tax-year).
 *
 * Both tables get a `tax_year` column, copied from the return (a return's year never changes),
 * and become `PARTITION BY LIST (tax_year)`: one partition per year (`line_item_y2024`,
 * `return_score_y2024`) and a DEFAULT partition each, so a year nobody made a partition for
 * never fails intake. PostgreSQL wants the partition key in every unique key, so the keys
 * become (return_id, line_no, tax_year), (id, tax_year) and (return_id, profile_version,
 * tax_year); a return has one year, so they are as unique as before. exam_case refers to its
 * score by (score_id, tax_year), as a foreign key to a partitioned table must.
 *
 * `ensure_tax_year_partitions(year)` makes a year's two partitions; intake calls it before it
 * stores a batch, so the DEFAULT partitions stay empty in practice. It runs as the owner
 * (SECURITY DEFINER: the application role may not change the schema) and is safe when two
 * callers race (an advisory lock, then a second look). A partition is made as a table of its
 * own and then attached: ATTACH takes a lock that lets reads and writes of the other years go
 * on, where CREATE TABLE … PARTITION OF would stop them. Rows of that year already in the
 * DEFAULT partition (written by something that did not call it first) are moved into the new
 * partition in the same transaction.
 */
export class PartitionByYear1766100000000 implements MigrationInterface {
  name = 'PartitionByYear1766100000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE exam_case DROP CONSTRAINT exam_case_score_id_fkey`);

    // The plain tables step aside (with the names of their indexes and sequence) for the
    // partitioned ones, which copy their columns, defaults, CHECKs, storage and compression.
    await setAside(q, 'line_item', 'plain');
    await q.query(`
      CREATE TABLE line_item (
        LIKE line_item_plain INCLUDING DEFAULTS INCLUDING CONSTRAINTS INCLUDING STORAGE INCLUDING COMPRESSION,
        tax_year smallint NOT NULL,
        PRIMARY KEY (return_id, line_no, tax_year)
      ) PARTITION BY LIST (tax_year)`);

    await setAside(q, 'return_score', 'plain');
    await q.query(`
      CREATE TABLE return_score (
        LIKE return_score_plain INCLUDING DEFAULTS INCLUDING CONSTRAINTS INCLUDING STORAGE INCLUDING COMPRESSION,
        tax_year smallint NOT NULL,
        ${scoreKeys(', tax_year')}
      ) PARTITION BY LIST (tax_year)`);
    await q.query(`ALTER TABLE return_score ALTER COLUMN id ADD GENERATED ALWAYS AS IDENTITY`);
    // Indexes made on the parent are made on every partition, present and future.
    await q.query(`CREATE INDEX idx_return_score_batch ON return_score (batch_id, profile_version)`);

    await q.query(`CREATE TABLE line_item_default PARTITION OF line_item DEFAULT`);
    await q.query(`CREATE TABLE return_score_default PARTITION OF return_score DEFAULT`);
    await q.query(ENSURE_FUNCTION);
    await q.query(`REVOKE ALL ON FUNCTION ensure_tax_year_partitions(smallint) FROM PUBLIC`);
    await q.query(`SELECT ensure_tax_year_partitions(y) FROM (SELECT DISTINCT tax_year AS y FROM tax_return ORDER BY 1) t`);

    await createLineItemChecks(q);

    await q.query(`
      INSERT INTO line_item (return_id, line_no, line_code, amount, tax_year)
      SELECT li.return_id, li.line_no, li.line_code, li.amount, r.tax_year FROM line_item_plain li JOIN tax_return r ON r.id = li.return_id`);
    await q.query(`
      INSERT INTO return_score (id, return_id, batch_id, profile_version, status, risk_score, amount_at_stake, priority, breakdown, failure_reason, scored_at, tax_year)
      OVERRIDING SYSTEM VALUE
      SELECT s.id, s.return_id, s.batch_id, s.profile_version, s.status, s.risk_score, s.amount_at_stake, s.priority, s.breakdown, s.failure_reason, s.scored_at, r.tax_year
        FROM return_score_plain s JOIN tax_return r ON r.id = s.return_id`);
    await assertSameCount(q, 'line_item_plain', 'line_item');
    await assertSameCount(q, 'return_score_plain', 'return_score');
    await q.query(`SELECT setval(pg_get_serial_sequence('return_score', 'id'), (SELECT coalesce(max(id), 0) + 1 FROM return_score_plain), false)`);

    await q.query(`ALTER TABLE exam_case ADD COLUMN tax_year smallint`);
    await q.query(`UPDATE exam_case c SET tax_year = s.tax_year FROM return_score s WHERE s.id = c.score_id`);
    await q.query(`ALTER TABLE exam_case ALTER COLUMN tax_year SET NOT NULL`);
    await q.query(`ALTER TABLE exam_case ADD CONSTRAINT exam_case_score_fkey FOREIGN KEY (score_id, tax_year) REFERENCES return_score (id, tax_year)`);

    await q.query(`DROP TABLE line_item_plain`);
    await q.query(`DROP TABLE return_score_plain`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE exam_case DROP CONSTRAINT exam_case_score_fkey`);
    await q.query(`DROP FUNCTION ensure_tax_year_partitions(smallint)`);

    await setAside(q, 'line_item', 'part');
    await q.query(`
      CREATE TABLE line_item (
        LIKE line_item_part INCLUDING DEFAULTS INCLUDING CONSTRAINTS INCLUDING STORAGE INCLUDING COMPRESSION
      )`);
    await q.query(`ALTER TABLE line_item DROP COLUMN tax_year`);
    await q.query(`ALTER TABLE line_item ADD PRIMARY KEY (return_id, line_no)`);
    await q.query(`INSERT INTO line_item (return_id, line_no, line_code, amount) SELECT return_id, line_no, line_code, amount FROM line_item_part`);
    await createLineItemChecks(q);

    await setAside(q, 'return_score', 'part');
    await q.query(`
      CREATE TABLE return_score (
        LIKE return_score_part INCLUDING DEFAULTS INCLUDING CONSTRAINTS INCLUDING STORAGE INCLUDING COMPRESSION,
        ${scoreKeys('')}
      )`);
    await q.query(`ALTER TABLE return_score DROP COLUMN tax_year`);
    await q.query(`ALTER TABLE return_score ALTER COLUMN id ADD GENERATED ALWAYS AS IDENTITY`);
    await q.query(`CREATE INDEX idx_return_score_batch ON return_score (batch_id, profile_version)`);
    await q.query(`
      INSERT INTO return_score (id, return_id, batch_id, profile_version, status, risk_score, amount_at_stake, priority, breakdown, failure_reason, scored_at)
      OVERRIDING SYSTEM VALUE
      SELECT id, return_id, batch_id, profile_version, status, risk_score, amount_at_stake, priority, breakdown, failure_reason, scored_at FROM return_score_part`);
    await q.query(`SELECT setval(pg_get_serial_sequence('return_score', 'id'), (SELECT coalesce(max(id), 0) + 1 FROM return_score_part), false)`);

    await q.query(`ALTER TABLE exam_case DROP COLUMN tax_year`);
    await q.query(`ALTER TABLE exam_case ADD CONSTRAINT exam_case_score_id_fkey FOREIGN KEY (score_id) REFERENCES return_score (id)`);

    // Dropping a partitioned table drops its partitions, detached ones excepted (those are
    // plain tables by then, an office's archive: docs/operations.md#archiving-a-tax-year).
    await q.query(`DROP TABLE line_item_part`);
    await q.query(`DROP TABLE return_score_part`);
  }
}

/**
 * Renames a table and what is named after it (its primary key, return_score's other indexes
 * and identity sequence) with a suffix, so a new table of the old name can be made beside it.
 */
async function setAside(q: QueryRunner, table: 'line_item' | 'return_score', suffix: string): Promise<void> {
  await q.query(`ALTER TABLE ${table} RENAME TO ${table}_${suffix}`);
  await q.query(`ALTER INDEX ${table}_pkey RENAME TO ${table}_${suffix}_pkey`);
  if (table === 'return_score') {
    await q.query(`ALTER INDEX uq_return_score RENAME TO uq_return_score_${suffix}`);
    await q.query(`ALTER INDEX idx_return_score_batch RENAME TO idx_return_score_${suffix}_batch`);
    await q.query(`ALTER SEQUENCE return_score_id_seq RENAME TO return_score_${suffix}_id_seq`);
  }
}

/** return_score's keys and foreign keys; `yearKey` is ', tax_year' on the partitioned table (its keys must hold the partition key). */
function scoreKeys(yearKey: string): string {
  return `CONSTRAINT return_score_pkey PRIMARY KEY (id${yearKey}),
        CONSTRAINT uq_return_score UNIQUE (return_id, profile_version${yearKey}),
        CONSTRAINT return_score_return_id_fkey FOREIGN KEY (return_id) REFERENCES tax_return (id) ON DELETE CASCADE,
        CONSTRAINT return_score_batch_id_fkey FOREIGN KEY (batch_id) REFERENCES filing_batch (id),
        CONSTRAINT return_score_profile_version_fkey FOREIGN KEY (profile_version) REFERENCES scoring_profile (version)`;
}

/**
 * The statement-level check that every line item's return exists (made in the intake
 * migration, docs/design.md#data-model), put on the new line_item in either direction; on the
 * partitioned parent it sees the rows of every partition a statement wrote. The migration
 * keeps its own copy of the DDL: a migration is history and must not change when a later one does.
 */
async function createLineItemChecks(q: QueryRunner): Promise<void> {
  for (const op of ['insert', 'update'] as const) {
    await q.query(`
      CREATE TRIGGER line_item_return_exists_${op} AFTER ${op.toUpperCase()} ON line_item
      REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION line_item_return_exists()`);
  }
}

/** Refuses to go on if a copy lost rows (a line or score whose return is gone cannot be placed in a year). */
async function assertSameCount(q: QueryRunner, from: string, to: string): Promise<void> {
  const [{ a, b }] = await q.query(`SELECT (SELECT count(*) FROM ${from})::bigint AS a, (SELECT count(*) FROM ${to})::bigint AS b`);
  if (a !== b) throw new Error(`${from} has ${a} rows but only ${b} could be given a tax year (rows whose return is missing); nothing was changed.`);
}

/**
 * The function that makes a year's partitions (see the class comment). Kept as text here:
 * a later change to it is a new migration with CREATE OR REPLACE.
 */
const ENSURE_FUNCTION = `
CREATE FUNCTION ensure_tax_year_partitions(year smallint) RETURNS boolean
LANGUAGE plpgsql SECURITY DEFINER SET search_path = public, pg_temp AS $$
DECLARE
  parent text;
  part text;
  made boolean := false;
  has_default_rows boolean;
BEGIN
  IF year IS NULL OR year < 1000 OR year > 9999 THEN
    RAISE EXCEPTION 'a tax year has four digits (got %)', year USING ERRCODE = 'invalid_parameter_value';
  END IF;
  -- The usual case, without any lock: both partitions are there.
  IF to_regclass(format('line_item_y%s', year)) IS NOT NULL AND to_regclass(format('return_score_y%s', year)) IS NOT NULL THEN
    RETURN false;
  END IF;
  -- Two callers for the same new year: the second waits here, then finds the tables made.
  PERFORM pg_advisory_xact_lock(hashtext('plumbline.year-partitions'));
  FOREACH parent IN ARRAY ARRAY['line_item', 'return_score'] LOOP
    part := format('%s_y%s', parent, year);
    CONTINUE WHEN to_regclass(part) IS NOT NULL;
    EXECUTE format('CREATE TABLE %I (LIKE %I INCLUDING DEFAULTS INCLUDING CONSTRAINTS INCLUDING STORAGE INCLUDING COMPRESSION)', part, parent);
    EXECUTE format('SELECT EXISTS (SELECT 1 FROM %I WHERE tax_year = $1)', parent || '_default') INTO has_default_rows USING year;
    IF has_default_rows THEN
      -- Rows of this year that went to DEFAULT: ATTACH would refuse the new partition while
      -- they are there, so they move into it first (cases refer to scores: their foreign key
      -- is taken off for the move and checked again whole when put back).
      IF parent = 'return_score' THEN
        ALTER TABLE exam_case DROP CONSTRAINT exam_case_score_fkey;
      END IF;
      EXECUTE format('WITH moved AS (DELETE FROM %I WHERE tax_year = $1 RETURNING *) INSERT INTO %I SELECT * FROM moved', parent || '_default', part) USING year;
    END IF;
    EXECUTE format('ALTER TABLE %I ATTACH PARTITION %I FOR VALUES IN (%s)', parent, part, year);
    IF has_default_rows AND parent = 'return_score' THEN
      ALTER TABLE exam_case ADD CONSTRAINT exam_case_score_fkey FOREIGN KEY (score_id, tax_year) REFERENCES return_score (id, tax_year);
    END IF;
    made := true;
  END LOOP;
  RETURN made;
END $$`;

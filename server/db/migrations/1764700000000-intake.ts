import type { MigrationInterface, QueryRunner } from 'typeorm';

// Lists as they were when this migration was written (a migration never changes later;
// a new code needs a new migration that alters the CHECK).
const ACTIVITY_CODES = `'none', 'retail', 'food-service', 'construction', 'personal-care', 'consulting', 'transport', 'rental', 'farming', 'other'`;
const BATCH_STATES = `'received', 'validating', 'rejected', 'queued', 'scoring', 'scored'`;
const LINE_CODES = `'inc.wages', 'inc.interest', 'inc.business.receipts', 'exp.business.supplies', 'exp.business.vehicle',
  'exp.business.travel', 'exp.business.other', 'ded.charity', 'ded.medical', 'tot.income', 'tot.deductions', 'tax.withheld', 'tax.refund'`;
const STATEMENT_KINDS = `'wages', 'interest', 'sales'`;

/**
 * Filing intake (issue 4): taxpayers, preparers, filing batches, returns, their line items
 * and third-party statements. Money is numeric, never float (docs/design.md#data-model).
 *
 * line_item has no declared foreign key to tax_return. A FOREIGN KEY checks each inserted
 * row on its own (one index probe and row lock per row): measured at about 5.7 s per
 * million line items, eight times a plain COPY of the same file. A statement-level trigger
 * does the same check once per statement, as one anti-join over the rows just written, so
 * the guarantee stays in the database at bulk cost: a line item without its return is
 * refused, deleting a return deletes its lines, and a return's id never changes.
 */
export class Intake1764700000000 implements MigrationInterface {
  name = 'Intake1764700000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE taxpayer (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        tin char(9) NOT NULL UNIQUE CHECK (tin ~ '^[0-9]{9}$'),
        name text NOT NULL,
        activity_code text NOT NULL CHECK (activity_code IN (${ACTIVITY_CODES})),
        email text,
        postal_address text,
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now()
      )`);

    await q.query(`
      CREATE TABLE preparer (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        code text NOT NULL UNIQUE,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);

    await q.query(`
      CREATE TABLE filing_batch (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        file_hash char(64) NOT NULL UNIQUE,
        format text NOT NULL CHECK (format IN ('xlsx', 'csv')),
        file_names text[] NOT NULL,
        state text NOT NULL DEFAULT 'received' CHECK (state IN (${BATCH_STATES})),
        return_count integer NOT NULL DEFAULT 0,
        line_item_count integer NOT NULL DEFAULT 0,
        statement_count integer NOT NULL DEFAULT 0,
        amended_count integer NOT NULL DEFAULT 0,
        scored_count integer NOT NULL DEFAULT 0,
        error_count integer NOT NULL DEFAULT 0,
        errors jsonb NOT NULL DEFAULT '[]',
        notices jsonb NOT NULL DEFAULT '[]',
        loaded_by uuid REFERENCES app_user (id),
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE INDEX idx_filing_batch_created ON filing_batch (created_at DESC)`);
    // The scoring worker and the Batches screen look for batches still in flight.
    await q.query(`CREATE INDEX idx_filing_batch_open ON filing_batch (state) WHERE state IN ('received', 'validating', 'queued', 'scoring')`);

    await q.query(`
      CREATE TABLE tax_return (
        id uuid PRIMARY KEY,
        batch_id uuid NOT NULL REFERENCES filing_batch (id),
        taxpayer_id uuid NOT NULL REFERENCES taxpayer (id),
        preparer_id uuid REFERENCES preparer (id),
        return_ref text NOT NULL,
        tax_year smallint NOT NULL,
        source_row integer NOT NULL,
        amends_return_id uuid REFERENCES tax_return (id),
        superseded boolean NOT NULL DEFAULT false,
        line_count integer NOT NULL DEFAULT 0,
        reported_income numeric(16,2),
        reported_deductions numeric(16,2),
        reported_refund numeric(16,2),
        total_wages numeric(16,2) NOT NULL DEFAULT 0,
        total_interest numeric(16,2) NOT NULL DEFAULT 0,
        total_receipts numeric(16,2) NOT NULL DEFAULT 0,
        total_business_expenses numeric(16,2) NOT NULL DEFAULT 0,
        computed_income numeric(16,2) NOT NULL DEFAULT 0,
        computed_deductions numeric(16,2) NOT NULL DEFAULT 0,
        taxable_income numeric(16,2) NOT NULL DEFAULT 0,
        computed_tax numeric(16,2) NOT NULL DEFAULT 0,
        tax_withheld numeric(16,2) NOT NULL DEFAULT 0,
        computed_refund numeric(16,2) NOT NULL DEFAULT 0,
        CONSTRAINT uq_tax_return_batch_ref UNIQUE (batch_id, return_ref)
      ) WITH (fillfactor = 50)`);
    // fillfactor 50: intake writes each return by COPY and then its totals (known only once
    // every line item is read) by UPDATE; with room left on the page that UPDATE is HOT
    // (no index touched), which made it several times cheaper in the ingest benchmark.
    // One current return per taxpayer and year; an amended return supersedes the one before.
    await q.query(`CREATE UNIQUE INDEX uq_tax_return_current ON tax_return (taxpayer_id, tax_year) WHERE NOT superseded`);
    // Taxpayer history (all years on file, amended ones included) and per-preparer pooling.
    await q.query(`CREATE INDEX idx_tax_return_taxpayer_year ON tax_return (taxpayer_id, tax_year)`);
    await q.query(`CREATE INDEX idx_tax_return_preparer ON tax_return (preparer_id) WHERE preparer_id IS NOT NULL`);
    await q.query(`CREATE INDEX idx_tax_return_amends ON tax_return (amends_return_id) WHERE amends_return_id IS NOT NULL`);

    // The primary key (return_id, line_no) is also the index scoring reads a return's lines by.
    await q.query(`
      CREATE TABLE line_item (
        return_id uuid NOT NULL,
        line_no smallint NOT NULL CHECK (line_no > 0),
        line_code text NOT NULL CHECK (line_code IN (${LINE_CODES})),
        amount numeric(14,2) NOT NULL,
        PRIMARY KEY (return_id, line_no)
      )`);
    await q.query(`
      CREATE FUNCTION line_item_return_exists() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        orphan uuid;
      BEGIN
        SELECT n.return_id INTO orphan FROM new_rows n
        WHERE NOT EXISTS (SELECT 1 FROM tax_return r WHERE r.id = n.return_id)
        LIMIT 1;
        IF orphan IS NOT NULL THEN
          RAISE EXCEPTION 'line_item refers to tax_return %, which does not exist', orphan
            USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`
      CREATE TRIGGER line_item_return_exists_insert AFTER INSERT ON line_item
      REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION line_item_return_exists()`);
    await q.query(`
      CREATE TRIGGER line_item_return_exists_update AFTER UPDATE ON line_item
      REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION line_item_return_exists()`);
    await q.query(`
      CREATE FUNCTION tax_return_delete_lines() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        DELETE FROM line_item li USING old_rows o WHERE li.return_id = o.id;
        RETURN NULL;
      END $$`);
    await q.query(`
      CREATE TRIGGER tax_return_delete_lines AFTER DELETE ON tax_return
      REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION tax_return_delete_lines()`);
    await q.query(`
      CREATE FUNCTION tax_return_id_fixed() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION 'a tax_return id never changes (its line items refer to it)' USING ERRCODE = 'foreign_key_violation';
      END $$`);
    await q.query(`
      CREATE TRIGGER tax_return_id_fixed BEFORE UPDATE OF id ON tax_return
      FOR EACH ROW WHEN (OLD.id IS DISTINCT FROM NEW.id) EXECUTE FUNCTION tax_return_id_fixed()`);

    await q.query(`
      CREATE TABLE third_party_statement (
        id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
        batch_id uuid NOT NULL REFERENCES filing_batch (id),
        tin char(9) NOT NULL CHECK (tin ~ '^[0-9]{9}$'),
        tax_year smallint NOT NULL,
        kind text NOT NULL CHECK (kind IN (${STATEMENT_KINDS})),
        payer text NOT NULL,
        amount numeric(14,2) NOT NULL CHECK (amount >= 0),
        source_row integer NOT NULL
      )`);
    // Matching income against statements goes by TIN and year (a statement may name a non-filer).
    await q.query(`CREATE INDEX idx_statement_tin_year ON third_party_statement (tin, tax_year)`);
    await q.query(`CREATE INDEX idx_statement_batch ON third_party_statement (batch_id)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE third_party_statement`);
    await q.query(`DROP TABLE line_item`);
    await q.query(`DROP FUNCTION line_item_return_exists()`);
    await q.query(`DROP TABLE tax_return`);
    await q.query(`DROP FUNCTION tax_return_delete_lines()`);
    await q.query(`DROP FUNCTION tax_return_id_fixed()`);
    await q.query(`DROP TABLE filing_batch`);
    await q.query(`DROP TABLE preparer`);
    await q.query(`DROP TABLE taxpayer`);
  }
}

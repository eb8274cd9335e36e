import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The first scoring profile's settings, frozen as they were when this migration was
 * written (shared/scoring/settings.ts DEFAULT_SCORING_SETTINGS at that time). A later change
 * of defaults is a new profile version, never an edit here.
 */
const VERSION_1 = `{"weights":{"digits":25,"historyDigits":5,"preparerDigits":20,"totalsMismatch":35,"incomeBelowStatements":40,"deductionsLarge":25,"expensesNearReceipts":25,"repeatedLosses":15,"cashHeavy":5,"roundAmounts":25,"thresholdBunching":25,"incomeDrop":15,"refundLarge":12,"repeatedAmounts":25},"selectionCut":30,"params":{"totalsToleranceCents":100,"statementShortfallMinCents":10000,"statementShortfallShare":0.05,"deductionPercentile":0.95,"deductionMinPeers":20,"expenseRatio":0.9,"typicalExpenseRatio":0.6,"lossYears":3,"lossWindowYears":5,"cashHeavyActivities":["retail","food-service","personal-care","construction"],"roundTailP":0.01,"thresholdsCents":[250000,1000000],"bunchingBand":0.9,"bunchingTailP":0.01,"incomeDropLogRatio":0.6931471805599453,"incomeDropMinCents":500000,"refundRatio":0.9,"repeatMinCents":10000,"repeatMinCount":2,"pooledFixedThresholdMinN":1000,"patternStakeShare":0.25}}`;

const CASE_STATES = `'open', 'assigned', 'in_review', 'awaiting_reply', 'referred', 'closed_no_change', 'closed_adjusted'`;

/**
 * Scoring (issue 5): versioned scoring profiles, one score per return and profile version
 * with its full breakdown, scoring runs (a batch under one profile), and examination cases
 * opened for returns at or above the profile's selection cut, with their history.
 */
export class Scoring1764800000000 implements MigrationInterface {
  name = 'Scoring1764800000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE scoring_profile (
        version integer PRIMARY KEY,
        settings jsonb NOT NULL,
        note text NOT NULL DEFAULT '',
        author_id uuid REFERENCES app_user (id),
        active boolean NOT NULL DEFAULT false,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`CREATE UNIQUE INDEX uq_scoring_profile_active ON scoring_profile (active) WHERE active`);
    await q.query(
      `INSERT INTO scoring_profile (version, settings, note, active) VALUES (1, $1::jsonb, 'Starting profile: common-practice defaults (docs/methods.md)', true)`,
      [VERSION_1],
    );

    await q.query(`
      CREATE TABLE scoring_run (
        id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
        batch_id uuid NOT NULL REFERENCES filing_batch (id),
        profile_version integer NOT NULL REFERENCES scoring_profile (version),
        total integer NOT NULL,
        scored integer NOT NULL DEFAULT 0,
        failed integer NOT NULL DEFAULT 0,
        context jsonb NOT NULL,
        started_at timestamptz NOT NULL DEFAULT now(),
        finished_at timestamptz,
        CONSTRAINT uq_scoring_run UNIQUE (batch_id, profile_version)
      )`);

    await q.query(`
      CREATE TABLE return_score (
        id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
        return_id uuid NOT NULL REFERENCES tax_return (id) ON DELETE CASCADE,
        batch_id uuid NOT NULL REFERENCES filing_batch (id),
        profile_version integer NOT NULL REFERENCES scoring_profile (version),
        status text NOT NULL CHECK (status IN ('scored', 'failed')),
        risk_score numeric(5,1),
        amount_at_stake numeric(14,2),
        priority numeric(18,2),
        breakdown jsonb,
        failure_reason text,
        scored_at timestamptz NOT NULL DEFAULT now(),
        CONSTRAINT uq_return_score UNIQUE (return_id, profile_version),
        CHECK ((status = 'scored') = (risk_score IS NOT NULL))
      )`);
    await q.query(`CREATE INDEX idx_return_score_batch ON return_score (batch_id, profile_version)`);
    // Breakdowns are ~3.6 kB of JSON, over the TOAST threshold: lz4 compresses them several times
    // faster than the default pglz (measured: a 500-return slice 14 % faster). Servers built
    // without lz4 keep pglz.
    await q.query(`
      DO $$ BEGIN
        ALTER TABLE return_score ALTER COLUMN breakdown SET COMPRESSION lz4;
      EXCEPTION WHEN feature_not_supported OR invalid_parameter_value THEN NULL;
      END $$`);

    await q.query(`
      CREATE TABLE exam_case (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        return_id uuid NOT NULL UNIQUE REFERENCES tax_return (id),
        taxpayer_id uuid NOT NULL REFERENCES taxpayer (id),
        batch_id uuid NOT NULL REFERENCES filing_batch (id),
        score_id bigint NOT NULL REFERENCES return_score (id),
        risk_score numeric(5,1) NOT NULL,
        amount_at_stake numeric(14,2) NOT NULL,
        priority numeric(18,2) NOT NULL,
        state text NOT NULL DEFAULT 'open' CHECK (state IN (${CASE_STATES})),
        assignee_id uuid REFERENCES app_user (id),
        due_date date,
        outcome text,
        adjusted_amount numeric(14,2),
        opened_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        closed_at timestamptz
      )`);
    // The queue sorts by priority, score or age within a state, and by assignee.
    await q.query(`CREATE INDEX idx_case_priority ON exam_case (priority DESC, id)`);
    await q.query(`CREATE INDEX idx_case_score ON exam_case (risk_score DESC, id)`);
    await q.query(`CREATE INDEX idx_case_state_priority ON exam_case (state, priority DESC, id)`);
    await q.query(`CREATE INDEX idx_case_assignee ON exam_case (assignee_id, state)`);
    await q.query(`CREATE INDEX idx_case_batch ON exam_case (batch_id)`);

    await q.query(`
      CREATE TABLE case_event (
        id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
        case_id uuid NOT NULL REFERENCES exam_case (id) ON DELETE CASCADE,
        at timestamptz NOT NULL DEFAULT now(),
        actor_id uuid REFERENCES app_user (id),
        kind text NOT NULL,
        from_state text,
        to_state text,
        detail jsonb NOT NULL DEFAULT '{}'
      )`);
    await q.query(`CREATE INDEX idx_case_event_case ON case_event (case_id, at)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE case_event`);
    await q.query(`DROP TABLE exam_case`);
    await q.query(`DROP TABLE return_score`);
    await q.query(`DROP TABLE scoring_run`);
    await q.query(`DROP TABLE scoring_profile`);
  }
}

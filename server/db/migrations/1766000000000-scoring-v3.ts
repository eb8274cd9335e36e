import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Scoring profile version 3 (issue 10): a preparer's pool leaves the whole client out and
 * is referred to random sets of as many of the batch's clients (clients, not amounts, are
 * what a preparer gets; docs/methods.md "Scoring components"). Its settings are frozen here
 * as they were when this migration was written (shared/scoring/settings.ts
 * DEFAULT_SCORING_SETTINGS at that time); versions 1 and 2 and their scores stay as they were.
 */
const VERSION_3 = `{"weights":{"digits":45,"historyDigits":10,"preparerDigits":35,"totalsMismatch":45,"incomeBelowStatements":50,"deductionsLarge":30,"expensesNearReceipts":25,"repeatedLosses":15,"cashHeavy":1,"roundAmounts":40,"thresholdBunching":22,"incomeDrop":15,"refundLarge":12,"repeatedAmounts":45},"selectionCut":22,"params":{"totalsToleranceCents":100,"statementShortfallMinCents":10000,"statementShortfallShare":0.05,"deductionPercentile":0.95,"deductionMinPeers":20,"expenseRatio":0.9,"typicalExpenseRatio":0.6,"lossYears":3,"lossWindowYears":5,"cashHeavyActivities":["retail","food-service","personal-care","construction"],"roundTailP":0.01,"thresholdsCents":[250000,1000000],"bunchingBand":0.9,"bunchingTailP":0.01,"incomeDropLogRatio":0.6931471805599453,"incomeDropMinCents":500000,"refundRatio":0.9,"repeatMinCents":10000,"repeatMinCount":2,"pooledFixedThresholdMinN":1000,"patternStakeShare":0.25,"patternPStart":0.01,"patternPFull":0.00001,"recurrenceMinRate":0.01,"roundPriorStrength":200,"preparerNull":"clients","recurringOwnLevel":true}}`;

const NOTE = 'Preparer pools judged by whole clients (issue 10): default profile';

export class ScoringVersionThree1766000000000 implements MigrationInterface {
  name = 'ScoringVersionThree1766000000000';

  async up(q: QueryRunner): Promise<void> {
    // A new version after whatever the office has made; it becomes the active one.
    const r: { v: number }[] = await q.query(`SELECT coalesce(max(version), 0) + 1 AS v FROM scoring_profile`);
    await q.query(`UPDATE scoring_profile SET active = false WHERE active`);
    await q.query(`INSERT INTO scoring_profile (version, settings, note, active) VALUES ($1, $2::jsonb, $3, true)`, [r[0].v, VERSION_3, NOTE]);
  }

  async down(q: QueryRunner): Promise<void> {
    const r: { version: number }[] = await q.query(`SELECT version FROM scoring_profile WHERE note = $1 ORDER BY version DESC LIMIT 1`, [NOTE]);
    if (!r.length) return;
    const v = r[0].version;
    const used: { n: string }[] = await q.query(`SELECT count(*) AS n FROM return_score WHERE profile_version = $1`, [v]);
    if (Number(used[0].n) > 0)
      throw new Error(`Profile version ${v} has ${used[0].n} scores; they keep their version, so it cannot be removed. Activate another version instead.`);
    await q.query(`DELETE FROM scoring_run WHERE profile_version = $1`, [v]);
    await q.query(`DELETE FROM scoring_profile WHERE version = $1`, [v]);
    await q.query(
      `UPDATE scoring_profile SET active = true WHERE version = (SELECT max(version) FROM scoring_profile) AND NOT EXISTS (SELECT 1 FROM scoring_profile WHERE active)`,
    );
  }
}

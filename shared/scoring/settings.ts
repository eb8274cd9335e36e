/**
 * A scoring profile's settings: the weight of each component (in points out of 100) and
 * every factor's parameter. Profiles are versioned; a new version never changes the old
 * one's scores (docs/design.md#scoring-runs).
 *
 * Defaults are common practice, no source, unless a comment names one
 * (docs/methods.md#risk-factors). They are a starting point for an office to tune, not
 * findings.
 */
import { z } from 'zod';
import { MIN_N_FOR_CONFORMITY } from '../digits/tests';
import { DEFAULT_RANDOM_SHARE } from '../programme/sample';
import { FACTORS } from './registry';
import { ACTIVITY_CODES, ALDERMERE_THRESHOLDS, DEFAULT_CASH_HEAVY_ACTIVITIES } from '../returns/line-codes';

/** Every scored component, in the order screens list them. */
export const COMPONENTS = [
  'digits',
  'historyDigits',
  'preparerDigits',
  'totalsMismatch',
  'incomeBelowStatements',
  'deductionsLarge',
  'expensesNearReceipts',
  'repeatedLosses',
  'cashHeavy',
  'roundAmounts',
  'thresholdBunching',
  'incomeDrop',
  'refundLarge',
  'repeatedAmounts',
] as const;
export type ComponentKey = (typeof COMPONENTS)[number];

/** Words for each component on screen and in memos (from the factor records, shared/scoring/registry.ts). */
export const COMPONENT_LABELS: Record<ComponentKey, string> = Object.fromEntries(COMPONENTS.map((c) => [c, FACTORS[c].label])) as Record<ComponentKey, string>;

const points = z.number().min(0).max(100);
const share = z.number().min(0).max(1);
const cents = z.number().int().min(0);

export const ScoringSettingsSchema = z.object({
  /** Points each component adds at full strength; the score is their sum, capped at 100. */
  weights: z.object(Object.fromEntries(COMPONENTS.map((c) => [c, points])) as Record<ComponentKey, typeof points>),
  /** A case is opened for every return scoring at or above this (unless `capacity` is set). */
  selectionCut: z.number().min(0).max(100),
  /**
   * Share of the batch drawn for random review from below the cut (docs/methods.md#programme-outcomes);
   * at least one return whenever the share is above 0. Absent on profiles saved before it: the default.
   */
  randomShare: z.number().min(0).max(0.2).default(DEFAULT_RANDOM_SHARE),
  /**
   * Selection by capacity: when set, a run opens cases for the batch's top casesPerMonth × months
   * returns (by score, ties by priority, never a score of 0) and `selectionCut` is not used.
   */
  capacity: z
    .object({ casesPerMonth: z.number().int().min(1).max(100_000), months: z.number().min(0.25).max(36) })
    .nullable()
    .default(null),
  params: z.object({
    /** Totals may differ from the recomputed ones by this much (docs/methods.md#risk-factors: more than 1 unit). */
    totalsToleranceCents: cents,
    /** Income short of statements by more than max(this, share × statements). */
    statementShortfallMinCents: cents,
    statementShortfallShare: share,
    /** A deduction's share of income is compared with this percentile of peers in the same income band (and with the filer's own other years times this percentile of the batch's year-to-year rise). */
    deductionPercentile: z.number().min(0.5).max(0.999),
    /** Fewest peers in a band before the percentile is trusted. */
    deductionMinPeers: z.number().int().min(5),
    /** Business expenses / receipts at or above this. */
    expenseRatio: z.number().min(0.1).max(2),
    /** Expense ratio taken as ordinary when estimating the amount at stake. */
    typicalExpenseRatio: z.number().min(0).max(1),
    /** Loss years among the last `lossWindowYears` (mirrors the common 3-of-5-years profit presumption). */
    lossYears: z.number().int().min(1),
    lossWindowYears: z.number().int().min(2),
    cashHeavyActivities: z.array(z.enum(ACTIVITY_CODES)),
    /**
     * Version 1's binomial tail for excess round amounts. Read by nothing from version 2 on
     * (round amounts are judged by p-value, patternPStart/patternPFull); kept so stored
     * version-1 settings still parse.
     */
    roundTailP: z.number().positive().max(0.2),
    /** The office's thresholds; amounts in [band × T, T) are "just under". */
    thresholdsCents: z.array(cents).min(1),
    bunchingBand: z.number().min(0.5).max(0.99),
    bunchingTailP: z.number().positive().max(0.2),
    /** |ln(x_t / x_(t-1))| above this on lines above `incomeDropMinCents` (ln 2: halved). */
    incomeDropLogRatio: z.number().positive(),
    incomeDropMinCents: cents,
    /** Refund / tax withheld above this. */
    refundRatio: share,
    /** Amounts below this are too common to count as repeated. */
    repeatMinCents: cents,
    /** The same amount on at least this many lines of one return. */
    repeatMinCount: z.number().int().min(2),
    /**
     * Pooled digit tests show the fixed published MAD thresholds only from this many amounts on;
     * never below what those thresholds accept (shared/digits/tests.ts MIN_N_FOR_CONFORMITY),
     * where they would answer "too few" and switch the test off.
     */
    pooledFixedThresholdMinN: z
      .number()
      .int()
      .refine((n) => n >= MIN_N_FOR_CONFORMITY.firstDigit, {
        message: `must be at least ${MIN_N_FOR_CONFORMITY.firstDigit}: below that the fixed first-digit thresholds answer "too few amounts" and the pooled test would count nothing`,
      }),
    /** Share of itemised expenses and deductions taken as at stake when only patterns point at them. */
    patternStakeShare: share,
    // Version 2 on (docs/methods.md "Scoring"); the defaults let version-1 settings parse.
    /** A pattern component's p-value starts to count below this… */
    patternPStart: z.number().positive().max(0.2).default(0.01),
    /** …and counts fully at or below this. */
    patternPFull: z.number().positive().max(0.01).default(1e-5),
    /** Share of a code's returns with a recurring group from which the code counts as periodic in a batch. */
    recurrenceMinRate: share.default(0.01),
    /** Strength (in amounts) of the batch prior that a line code's round-amount rate is shrunk toward. */
    roundPriorStrength: z.number().min(0).default(200),
    /**
     * Version 3 on: how a preparer's pool is referred to chance. `clients` (the default from
     * version 3): the whole client is left out of the pool and the pool is compared with
     * random sets of as many of the batch's clients (docs/methods.md "Scoring"); `amounts`
     * (version 2, and what stored version-2 settings read): the return is left out and the
     * spread is a Dirichlet-multinomial over amounts.
     */
    preparerNull: z.enum(['amounts', 'clients']).default('amounts'),
    /**
     * Version 3 on: a recurring deduction (a standing gift, a care plan) large against the
     * batch's recurring bills on its line is also weighed against the filer's own other years,
     * as other deductions are (docs/methods.md "Scoring"); false in stored version-2 settings.
     */
    recurringOwnLevel: z.boolean().default(false),
  }),
});
export type ScoringSettings = z.infer<typeof ScoringSettingsSchema>;

/**
 * The default profile: version 3 (server/db/migrations/1766000000000-scoring-v3.ts writes it,
 * frozen there). Weights come from the factor records; versions 1 and 2 stay frozen in their
 * own migrations.
 */
export const DEFAULT_SCORING_SETTINGS: ScoringSettings = {
  weights: Object.fromEntries(COMPONENTS.map((c) => [c, FACTORS[c].defaultWeight])) as Record<ComponentKey, number>,
  // Tuned on the labelled Aldermere batches (npm run bench:ranking): about 1 % of typical returns reach 22.
  selectionCut: 22,
  randomShare: DEFAULT_RANDOM_SHARE,
  capacity: null,
  params: {
    totalsToleranceCents: 100,
    statementShortfallMinCents: 10_000,
    statementShortfallShare: 0.05,
    deductionPercentile: 0.95,
    deductionMinPeers: 20,
    expenseRatio: 0.9,
    typicalExpenseRatio: 0.6,
    lossYears: 3,
    lossWindowYears: 5,
    cashHeavyActivities: [...DEFAULT_CASH_HEAVY_ACTIVITIES],
    roundTailP: 0.01,
    thresholdsCents: [ALDERMERE_THRESHOLDS.receiptRequiredCents, ALDERMERE_THRESHOLDS.cashReportCents],
    bunchingBand: 0.9,
    bunchingTailP: 0.01,
    incomeDropLogRatio: Math.LN2,
    incomeDropMinCents: 500_000,
    refundRatio: 0.9,
    repeatMinCents: 10_000,
    repeatMinCount: 2,
    pooledFixedThresholdMinN: 1000,
    patternStakeShare: 0.25,
    patternPStart: 0.01,
    patternPFull: 1e-5,
    recurrenceMinRate: 0.01,
    roundPriorStrength: 200,
    preparerNull: 'clients',
    recurringOwnLevel: true,
  },
};

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

/** Words for each component on screen and in memos. */
export const COMPONENT_LABELS: Record<ComponentKey, string> = {
  digits: 'Digit pattern of this return',
  historyDigits: 'Digit pattern of the taxpayer\'s years on file',
  preparerDigits: 'Digit pattern of the preparer\'s returns',
  totalsMismatch: 'Totals do not add up',
  incomeBelowStatements: 'Income below third-party statements',
  deductionsLarge: 'Deductions large against income',
  expensesNearReceipts: 'Business expenses near receipts',
  repeatedLosses: 'Business losses in most recent years',
  cashHeavy: 'Cash-heavy activity',
  roundAmounts: 'Excess round amounts',
  thresholdBunching: 'Amounts bunched under a threshold',
  incomeDrop: 'Sharp income drop',
  refundLarge: 'Refund large against tax withheld',
  repeatedAmounts: 'Same amount repeated',
};

const points = z.number().min(0).max(100);
const share = z.number().min(0).max(1);
const cents = z.number().int().min(0);

export const ScoringSettingsSchema = z.object({
  /** Points each component adds at full strength; the score is their sum, capped at 100. */
  weights: z.object(Object.fromEntries(COMPONENTS.map((c) => [c, points])) as Record<ComponentKey, typeof points>),
  /** A case is opened for every return scoring at or above this. */
  selectionCut: z.number().min(0).max(100),
  params: z.object({
    /** Totals may differ from the recomputed ones by this much (docs/methods.md#risk-factors: more than 1 unit). */
    totalsToleranceCents: cents,
    /** Income short of statements by more than max(this, share × statements). */
    statementShortfallMinCents: cents,
    statementShortfallShare: share,
    /** A deduction's share of income is compared with this percentile of peers in the same income band. */
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
    /** Binomial tail probability below which round amounts are in excess. */
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
    /** Pooled digit tests use the fixed published MAD thresholds only from this many amounts on. */
    pooledFixedThresholdMinN: z.number().int().min(100),
    /** Share of itemised expenses and deductions taken as at stake when only patterns point at them. */
    patternStakeShare: share,
  }),
});
export type ScoringSettings = z.infer<typeof ScoringSettingsSchema>;

/** The first profile version, written by the migration that creates profiles. */
export const DEFAULT_SCORING_SETTINGS: ScoringSettings = {
  weights: {
    digits: 25,
    historyDigits: 5,
    preparerDigits: 20,
    totalsMismatch: 35,
    incomeBelowStatements: 40,
    deductionsLarge: 25,
    expensesNearReceipts: 25,
    repeatedLosses: 15,
    cashHeavy: 5,
    roundAmounts: 25,
    thresholdBunching: 25,
    incomeDrop: 15,
    refundLarge: 12,
    repeatedAmounts: 25,
  },
  selectionCut: 30,
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
  },
};

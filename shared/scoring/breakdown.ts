/**
 * The stored and shown explanation of one return's score: every number on the case screen
 * comes from here (docs/design.md#scoring-runs).
 */
import { z } from 'zod';
import { COMPONENTS } from './settings';

export const ComponentResultSchema = z.object({
  key: z.enum(COMPONENTS),
  label: z.string(),
  /** Points at full strength (the profile's weight). */
  weight: z.number(),
  strength: z.number().min(0).max(1),
  /** weight × strength. */
  points: z.number(),
  evidence: z.string(),
});
export type ComponentResult = z.infer<typeof ComponentResultSchema>;

export const DigitSnapshotSchema = z.object({
  /** Amounts in the first-digit test. */
  n: z.number().int(),
  /** First-digit counts, digits 1..9. */
  firstDigitCounts: z.array(z.number().int()).length(9),
  mad: z.number().nullable(),
  expectedMad: z.number().nullable(),
  zScore: z.number().nullable(),
  verdict: z.enum(['within_expected', 'elevated', 'high', 'too_few']),
  secondDigitZ: z.number().nullable(),
});
export type DigitSnapshot = z.infer<typeof DigitSnapshotSchema>;

export const PoolSnapshotSchema = z.object({
  n: z.number().int(),
  mad: z.number().nullable(),
  conformity: z.enum(['close', 'acceptable', 'marginal', 'nonconformity', 'too_few']),
  verdict: z.enum(['within_expected', 'elevated', 'high', 'too_few']),
  zScore: z.number().nullable(),
  judgedBy: z.enum(['fixed', 'size-aware', 'none']),
  /** First-digit counts of the pooled amounts (for the preparer chart). */
  firstDigitCounts: z.array(z.number().int()).length(9).optional(),
});
export type PoolSnapshot = z.infer<typeof PoolSnapshotSchema>;

/**
 * The return's combined digit-and-pattern evidence as one calibrated test: `p` is the
 * return's own p-value (first- and second-digit tests and the other pattern tests combined
 * by Simes' method, docs/methods.md "Scoring"), `q` its Benjamini–Hochberg q-value across
 * the scoring run's batch. Absent on scores made before profile version 2.
 */
export const PatternEvidenceSchema = z.object({
  p: z.number().min(0).max(1),
  q: z.number().min(0).max(1),
});
export type PatternEvidence = z.infer<typeof PatternEvidenceSchema>;

export const ScoreBreakdownSchema = z.object({
  riskScore: z.number().min(0).max(100),
  components: z.array(ComponentResultSchema),
  digits: DigitSnapshotSchema,
  preparerPool: PoolSnapshotSchema.nullable(),
  historyPool: PoolSnapshotSchema.nullable(),
  amountAtStakeCents: z.number().int().min(0),
  stakeBasis: z.string(),
  totals: z.object({
    incomeCents: z.number().int(),
    deductionsCents: z.number().int(),
    taxableCents: z.number().int(),
    taxCents: z.number().int(),
    withheldCents: z.number().int(),
    refundCents: z.number().int(),
  }),
  selectionCut: z.number(),
  selected: z.boolean(),
  /** Calibrated pattern evidence (profile version 2 on); see PatternEvidenceSchema. */
  pattern: PatternEvidenceSchema.optional(),
});
export type ScoreBreakdown = z.infer<typeof ScoreBreakdownSchema>;

/**
 * The Programme API contract (issue 17, docs/methods.md#programme-outcomes): how the selection
 * is doing, measured on finished cases, with intervals; and the random review cases of a batch.
 * Amounts here are statistics (means and their intervals) in currency units, rounded to the
 * cent, not stored money.
 */
import { z } from 'zod';
import { ScoringSettingsSchema } from '../scoring/settings';

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Give a date as YYYY-MM-DD, e.g. 2026-01-31');

/** Query of `GET /api/programme/outcomes`: cases finished from … to (dates, both included), one batch or all. */
export const OutcomesQuerySchema = z.object({
  from: isoDate.optional(),
  to: isoDate.optional(),
  batch: z.uuid('Give a batch id').optional(),
});
export type OutcomesQuery = z.infer<typeof OutcomesQuerySchema>;

/** Query of `GET /api/programme/controls`. */
export const ControlsQuerySchema = z.object({ batch: z.uuid('Give a batch id') });

/** An estimate with its interval and the method's name; nulls where the method gives none. */
export const IntervalSchema = z.object({
  estimate: z.number().nullable(),
  low: z.number().nullable(),
  high: z.number().nullable(),
  method: z.string(),
  /** False when the figure rests on too few finished cases or its interval is too wide to say anything. */
  enoughData: z.boolean(),
});
export type IntervalDto = z.infer<typeof IntervalSchema>;

/** Outcomes of one group of cases. */
export const GroupOutcomeSchema = z.object({
  /** Closed adjusted + closed with no change: the base of the rate. */
  closed: z.number().int(),
  adjusted: z.number().int(),
  /** Referred to a specialist unit: finished, but without an adjustment outcome yet (not in the rate). */
  referred: z.number().int(),
  /** Share of closed cases closed adjusted. */
  rate: IntervalSchema,
  /** Mean adjusted amount over the cases closed adjusted. */
  meanAdjusted: IntervalSchema,
});
export type GroupOutcome = z.infer<typeof GroupOutcomeSchema>;

/** Selected by score against chosen at random, and the lift (selected ÷ random). */
export const ComparisonSchema = z.object({
  selected: GroupOutcomeSchema,
  random: GroupOutcomeSchema,
  rateLift: IntervalSchema,
  amountLift: IntervalSchema,
});
export type Comparison = z.infer<typeof ComparisonSchema>;

/** Answer of `GET /api/programme/outcomes`. */
export const OutcomesSchema = z.object({
  overall: ComparisonSchema,
  /** Score deciles of the batch's scored returns (1 = lowest tenth, 10 = highest). */
  byDecile: z.array(z.object({ decile: z.number().int().min(1).max(10), selected: GroupOutcomeSchema, random: GroupOutcomeSchema })),
  /** Selected cases where the factor added points. */
  byFactor: z.array(z.object({ key: z.string(), label: z.string(), outcome: GroupOutcomeSchema })),
  byExaminer: z.array(z.object({ examinerId: z.string(), name: z.string(), comparison: ComparisonSchema, closuresPerWeek: z.number() })),
  byBatch: z.array(z.object({ batchId: z.string(), label: z.string(), comparison: ComparisonSchema })),
  /** Cases finished per week (Monday), with what the adjusted ones came to. */
  weekly: z.array(z.object({ week: z.string(), finished: z.number().int(), adjusted: z.number().int(), adjustedTotal: z.string() })),
  /** Throughput: cases finished per examiner per week (hours are not tracked). */
  examinerWeeks: z.array(z.object({ examinerId: z.string(), name: z.string(), week: z.string(), finished: z.number().int() })),
  /** Random review cases not yet finished (in the filter's batch, or all). */
  openRandom: z.number().int(),
  /** Below this many closed cases a figure is "not enough closed cases yet". */
  minClosed: z.number().int(),
});
export type Outcomes = z.infer<typeof OutcomesSchema>;

/** Answer of `GET /api/programme/controls`: the batch's random review cases. */
export const ControlsSchema = z.object({ items: z.array(z.object({ caseId: z.string(), returnRef: z.string() })) });
export type Controls = z.infer<typeof ControlsSchema>;

/** One suggested weight with its 95 % interval, in points on the current profile's scale. */
export const WeightSuggestionSchema = z.object({
  key: z.string(),
  label: z.string(),
  current: z.number(),
  suggested: z.number(),
  low: z.number(),
  high: z.number(),
  /** False when the interval is too wide to say anything: the current weight is kept. */
  enoughData: z.boolean(),
});

/** Precision at k and adjustment yield of one ranking on the held-back closed cases. */
export const BackTestSchema = z.object({ k: z.number().int(), precisionAtK: z.number(), yieldCents: z.number() });

/**
 * Weights learned from closed cases without the selection's bias: a weighted, regularised
 * logistic fit (random review cases weighted 1 / sampling rate) and its back-test on closed cases
 * held back from the fit. Null fields when too few closed cases.
 */
export const WeightFitSchema = z.object({
  /** Closed cases (adjusted or no change) on file, of them chosen at random. */
  closed: z.number().int(),
  randomClosed: z.number().int(),
  /** Fewest closed cases (and adjusted among them) before a fit is shown. */
  minClosed: z.number().int(),
  fit: z
    .object({
      suggestions: z.array(WeightSuggestionSchema),
      fitted: z.number().int(),
      heldBack: z.number().int(),
      backTest: z.object({ current: BackTestSchema, suggested: BackTestSchema }),
      method: z.string(),
    })
    .nullable(),
});
export type WeightFitDto = z.infer<typeof WeightFitSchema>;

/** Body of `POST /api/scoring/preview`: a profile's settings tried on one scored batch, nothing saved. */
export const PreviewRequestSchema = z.object({
  batchId: z.uuid('Give the id of a scored batch'),
  settings: ScoringSettingsSchema,
});
export type PreviewRequest = z.infer<typeof PreviewRequestSchema>;

/** Answer of `POST /api/scoring/preview`. */
export const PreviewSchema = z.object({
  batchId: z.string(),
  /** The run the preview reads: the batch's latest scoring, and its profile version. */
  version: z.number().int(),
  scored: z.number().int(),
  selected: z.number().int(),
  stay: z.number().int(),
  leave: z.number().int(),
  join: z.number().int(),
  /** The score at which selection stops (the capacity's cut, or the fixed one); null when nothing is selected. */
  cut: z.number().nullable(),
  /** False when the factor parameters differ from the run's: the preview then uses the run's strengths. */
  exact: z.boolean(),
  note: z.string(),
  /** Expected adjustments and amount among the selection, from the outcomes so far; null when too few. */
  expected: z
    .object({
      adjusted: z.number(),
      rate: z.number(),
      amountCents: z.number(),
      closedCases: z.number().int(),
      method: z.string(),
    })
    .nullable(),
});
export type Preview = z.infer<typeof PreviewSchema>;

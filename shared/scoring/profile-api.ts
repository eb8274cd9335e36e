/**
 * Scoring profiles over the API: versions, a new version, the factor performance read from
 * closed cases, and the weights learned from them (docs/design.md#scoring-runs).
 */
import { z } from 'zod';
import { WeightFitSchema } from '../programme/api';
import { noControlChars } from '../text';
import { COMPONENTS, ScoringSettingsSchema } from './settings';

export const ProfileVersionSchema = z.object({
  version: z.number().int(),
  note: z.string(),
  active: z.boolean(),
  authorName: z.string().nullable(),
  createdAt: z.string(),
  settings: ScoringSettingsSchema,
});
export type ProfileVersion = z.infer<typeof ProfileVersionSchema>;

export const ProfileListSchema = z.object({ items: z.array(ProfileVersionSchema) });

/** Body of `POST /api/scoring/profiles`: a new version (never an edit of an old one). */
export const NewProfileSchema = z.object({
  settings: ScoringSettingsSchema,
  note: z
    .string()
    .trim()
    .min(3, 'Say in a few words why the weights change')
    .max(500)
    .check(noControlChars({ lines: true })),
  activate: z.boolean().default(true),
});
export type NewProfileInput = z.infer<typeof NewProfileSchema>;

/** Body of `POST /api/batches/:id/rescore`. */
export const RescoreSchema = z.object({ version: z.number().int().positive().optional() });

export const FactorPerformanceSchema = z.object({
  key: z.enum(COMPONENTS),
  label: z.string(),
  /** Closed cases on which the factor added points. */
  flagged: z.number().int(),
  /** Of those, closed as adjusted. */
  adjusted: z.number().int(),
  /** adjusted / flagged, null when nothing was flagged. */
  adjustedRate: z.number().nullable(),
  weight: z.number(),
});
export type FactorPerformance = z.infer<typeof FactorPerformanceSchema>;

export const PerformanceSchema = z.object({
  version: z.number().int(),
  closedCases: z.number().int(),
  adjustedCases: z.number().int(),
  baseRate: z.number().nullable(),
  factors: z.array(FactorPerformanceSchema),
  /** Suggested weights from the outcome model fitted without the selection's bias (issue 17). */
  learned: WeightFitSchema,
});
export type Performance = z.infer<typeof PerformanceSchema>;

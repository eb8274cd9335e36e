/**
 * The daily pass (issue 13): what `POST /api/housekeeping/run` and the scheduled job answer.
 * Each count is what this run did; a second run on the same office day finds nothing new
 * and answers zeros.
 */
import { z } from 'zod';

/** Days before a request's due date when the one reminder goes out (default of REMINDER_DAYS_BEFORE). */
export const DEFAULT_REMINDER_DAYS_BEFORE = 7;

/** Answer of the daily pass. */
export const HousekeepingResultSchema = z.object({
  /** The office day the pass ran for (YYYY-MM-DD). */
  day: z.string(),
  remindersSent: z.number().int(),
  requestsExpired: z.number().int(),
  digestsSent: z.number().int(),
  /** Cases with an assessment deadline inside 90 days named in the digests sent. */
  deadlineWarnings: z.number().int(),
});
export type HousekeepingResult = z.infer<typeof HousekeepingResultSchema>;

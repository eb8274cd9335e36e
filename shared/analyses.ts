/** `POST /api/analyses/digits` with a JSON body: the amounts to profile. */
import { z } from 'zod';

/** Most amounts one JSON request may carry (larger sets go as a file). */
export const MAX_JSON_AMOUNTS = 100_000;

export const DigitAnalysisRequestSchema = z.object({
  amounts: z
    .array(z.union([z.number(), z.string()]), { error: 'Send "amounts": an array of numbers or decimal strings' })
    .min(1, 'Send at least one amount')
    .max(MAX_JSON_AMOUNTS, `Send at most ${MAX_JSON_AMOUNTS.toLocaleString('en-US')} amounts in JSON; upload a file for more`),
});
export type DigitAnalysisRequest = z.infer<typeof DigitAnalysisRequestSchema>;

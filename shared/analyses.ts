/** Digit analyses: `POST /api/analyses/digits` (ad hoc) and the working papers saved to a case. */
import { z } from 'zod';
import { digitResultSchema } from './digits/schema';
import { LINE_CODES } from './returns/line-codes';

/** Most amounts one JSON request may carry (larger sets go as a file). */
export const MAX_JSON_AMOUNTS = 100_000;

export const DigitAnalysisRequestSchema = z.object({
  amounts: z
    .array(z.union([z.number(), z.string()]), { error: 'Send "amounts": an array of numbers or decimal strings' })
    .min(1, 'Send at least one amount')
    .max(MAX_JSON_AMOUNTS, `Send at most ${MAX_JSON_AMOUNTS.toLocaleString('en-US')} amounts in JSON; upload a file for more`),
});
export type DigitAnalysisRequest = z.infer<typeof DigitAnalysisRequestSchema>;

/**
 * The file ending a reply file is read by when it holds records as data (CSV or XLSX, of
 * shared/letters.ts REPLY_FILE_TYPES), or null for a document or an image: what a digit
 * analysis or a reconciliation can read.
 */
export function dataFileEnding(contentType: string): '.csv' | '.xlsx' | null {
  if (contentType === 'text/csv') return '.csv';
  return contentType === 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' ? '.xlsx' : null;
}

/** Where a saved analysis takes its amounts: a file the taxpayer sent through a reply link. */
export const AnalysisSourceSchema = z.strictObject({
  uploadId: z.uuid({ error: 'Choose a received reply file (its id)' }),
});
export type AnalysisSource = z.infer<typeof AnalysisSourceSchema>;

/** `POST /api/cases/:id/analyses`: run a digit analysis and keep it with the case. */
export const SaveAnalysisRequestSchema = z.strictObject({
  source: AnalysisSourceSchema,
  column: z.string().trim().min(1).max(200).nullable().optional(),
  by: z.string().trim().min(1).max(200).nullable().optional(),
});
export type SaveAnalysisRequest = z.infer<typeof SaveAnalysisRequestSchema>;

/** A saved analysis (working paper) as the API answers it. */
export const SavedAnalysisSchema = z.object({
  id: z.string(),
  createdAt: z.string(),
  createdBy: z.object({ id: z.string(), name: z.string() }),
  source: AnalysisSourceSchema,
  sourceLabel: z.string(),
  fileName: z.string().nullable(),
  sha256: z.string().nullable(),
  column: z.string().nullable(),
  by: z.string().nullable(),
  what: z.string(),
  result: digitResultSchema,
});
export type SavedAnalysis = z.infer<typeof SavedAnalysisSchema>;

/** `GET /api/cases/:id/analyses`. */
export const SavedAnalysisListSchema = z.object({ analyses: z.array(SavedAnalysisSchema) });

/**
 * `POST /api/cases/:id/reconciliation`: a received ledger's total per category (the `by`
 * column), the categories mapped to the return's line codes, beside the amounts reported.
 */
export const ReconciliationRequestSchema = z.strictObject({
  source: AnalysisSourceSchema,
  column: z.string().trim().min(1).max(200).nullable().optional(),
  by: z.string().trim().min(1).max(200),
  /** Ledger category → line code (categories left out are listed as unmapped). */
  mapping: z.record(z.string(), z.enum(LINE_CODES)),
});
export type ReconciliationRequest = z.infer<typeof ReconciliationRequestSchema>;

/** One line code: the ledger's total of its categories beside the reported amount. */
export const ReconciliationRowSchema = z.object({
  lineCode: z.string(),
  label: z.string(),
  categories: z.array(z.string()),
  /** Decimal text with 2 decimals (exact; ledgers may exceed a double's integers). */
  ledgerTotal: z.string(),
  reported: z.string(),
  /** ledgerTotal − reported. */
  difference: z.string(),
});

/** The reconciliation's answer. */
export const ReconciliationSchema = z.object({
  rows: z.array(ReconciliationRowSchema),
  unmapped: z.array(z.object({ category: z.string(), total: z.string() })),
});
export type Reconciliation = z.infer<typeof ReconciliationSchema>;

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

const uploadIdSchema = z.uuid({ error: 'Choose a received reply file (its id)' });

/** A file the taxpayer sent through a reply link (what a reconciliation reads). */
export const UploadSourceSchema = z.strictObject({ uploadId: uploadIdSchema });

/** Most amounts one pool may hold; a larger one is refused with how to narrow it. */
export const MAX_POOL_AMOUNTS = 2_000_000;

const taxYearSchema = z
  .number({ error: 'Give the tax year as a whole number, e.g. 2024' })
  .int('Give the tax year as a whole number, e.g. 2024')
  .min(1900, 'Give a tax year from 1900 on')
  .max(2100, 'Give a tax year up to 2100');

/**
 * A pool of amounts from the returns on file (docs/methods.md#pooled-figures): one preparer's
 * returns (optionally of one tax year), one line code in one batch or one tax year, or one
 * taxpayer's years. Pools read the current returns only (an amended return replaces the one
 * it amends); preparer and taxpayer pools read the itemised lines, as scoring pools them.
 */
export const AnalysisPoolSchema = z.discriminatedUnion(
  'kind',
  [
    z.strictObject({
      kind: z.literal('preparer'),
      preparerId: z.uuid({ error: 'Choose a preparer (its id, from GET /api/analyses/pools)' }),
      taxYear: taxYearSchema.optional(),
    }),
    z
      .strictObject({
        kind: z.literal('lineCode'),
        lineCode: z.enum(LINE_CODES, { error: `Choose a line code: ${LINE_CODES.join(', ')}` }),
        batchId: z.uuid({ error: 'Choose a batch (its id, from GET /api/analyses/pools)' }).optional(),
        taxYear: taxYearSchema.optional(),
      })
      .refine((p) => (p.batchId === undefined) !== (p.taxYear === undefined), {
        path: ['batchId'],
        message: 'Give exactly one of "batchId" (one batch) or "taxYear" (one tax year) for a line-code pool',
      }),
    z.strictObject({
      kind: z.literal('taxpayer'),
      taxpayerId: z.uuid({ error: "Choose a taxpayer (its id, e.g. the case's taxpayer)" }),
    }),
  ],
  { error: 'Choose a pool kind: "preparer", "lineCode" or "taxpayer"' },
);
export type AnalysisPool = z.infer<typeof AnalysisPoolSchema>;

/**
 * Where a saved analysis takes its amounts: a file the taxpayer sent through a reply link
 * ({uploadId}), or a pool of the returns on file ({pool}). One object with exactly one of the
 * two (rather than a union), so a mistake inside a pool is reported at its own path.
 */
export const AnalysisSourceSchema = z
  .strictObject({
    uploadId: uploadIdSchema.optional(),
    pool: AnalysisPoolSchema.optional(),
  })
  .refine((s) => (s.uploadId === undefined) !== (s.pool === undefined), {
    message: 'Give exactly one source: "uploadId" (a received reply file) or "pool" (amounts from the returns on file)',
  });
export type AnalysisSource = z.infer<typeof AnalysisSourceSchema>;

/** `POST /api/analyses/digits/pool`: the digit analysis of a pool, kept nowhere. */
export const PoolAnalysisRequestSchema = z.strictObject({ pool: AnalysisPoolSchema });
export type PoolAnalysisRequest = z.infer<typeof PoolAnalysisRequestSchema>;

/** The answer of `POST /api/analyses/digits/pool`: the pool in words and its result. */
export const PoolAnalysisSchema = z.object({
  /** "Preparer PRP-0042, tax year 2024, 1,234 amounts". */
  description: z.string(),
  result: digitResultSchema,
});
export type PoolAnalysis = z.infer<typeof PoolAnalysisSchema>;

/** `GET /api/analyses/pools`: what the pool pickers offer. */
export const PoolChoicesSchema = z.object({
  preparers: z.array(z.object({ id: z.string(), code: z.string(), returns: z.number().int() })),
  batches: z.array(z.object({ id: z.string(), label: z.string(), taxYears: z.array(z.number().int()) })),
  taxYears: z.array(z.number().int()),
});
export type PoolChoices = z.infer<typeof PoolChoicesSchema>;

/** `POST /api/cases/:id/analyses`: run a digit analysis and keep it with the case. */
export const SaveAnalysisRequestSchema = z
  .strictObject({
    source: AnalysisSourceSchema,
    column: z.string().trim().min(1).max(200).nullable().optional(),
    by: z.string().trim().min(1).max(200).nullable().optional(),
  })
  .refine((r) => !r.source.pool || (!r.column && !r.by), {
    path: ['column'],
    message: 'A pool from the returns on file has no columns: leave "column" and "by" out (they name columns of a reply file)',
  });
export type SaveAnalysisRequest = z.infer<typeof SaveAnalysisRequestSchema>;

/** A saved analysis (working paper) as the API answers it. */
export const SavedAnalysisSchema = z.object({
  id: z.string(),
  createdAt: z.string(),
  createdBy: z.object({ id: z.string(), name: z.string() }),
  source: AnalysisSourceSchema,
  /** The source in words: the reply file's name, or the pool with its count of amounts. */
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
  source: UploadSourceSchema,
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

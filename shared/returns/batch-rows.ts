/**
 * The batch file format (docs/design.md#batch-files) as zod 4 schemas, and the batch API's
 * answers (docs/design.md#api-contract). One contract for the server's intake, the demo
 * generator, the tests and the Batches screen.
 *
 * Row schemas take one row as `{ column: text }`: every cell already turned into trimmed
 * text (a blank or missing cell is ""), whether it came from a CSV file or an XLSX sheet,
 * so both formats are judged by exactly the same rules. Each message says what is wrong
 * with the value and how to fix it; the intake adds the file, row and column.
 */
import { z } from 'zod';
import { ACTIVITY_CODES, LINE_CODE_DEFS, LINE_CODES, STATEMENT_KINDS, type ActivityCode, type LineCode, type StatementKind } from './line-codes';
import { centsFromDecimal, DECIMAL_PROBLEM_TEXT, decimalProblem } from './money';
import { findControlChar, noControlChars } from '../text';

// ---------------------------------------------------------------------------------------
// Files and columns

/** The three tables of a batch, by their file/sheet name. */
export const BATCH_TABLES = ['returns', 'line_items', 'statements'] as const;
export type BatchTable = (typeof BATCH_TABLES)[number];

/** Columns of each table, in the documented order; `required` ones must be in the header. */
export const BATCH_COLUMNS = {
  returns: {
    required: ['return_ref', 'tin', 'tax_year', 'taxpayer_name', 'activity_code', 'preparer_id'],
    optional: ['email', 'postal_address', 'filed_on'],
  },
  line_items: { required: ['return_ref', 'line_code', 'amount'], optional: [] },
  statements: { required: ['tin', 'tax_year', 'kind', 'payer', 'amount'], optional: [] },
} as const satisfies Record<BatchTable, { required: readonly string[]; optional: readonly string[] }>;

/** Every column a table may have. */
export function columnsOf(table: BatchTable): readonly string[] {
  return [...BATCH_COLUMNS[table].required, ...BATCH_COLUMNS[table].optional];
}

/**
 * A header cell as the intake reads it: trimmed, lower case, spaces and hyphens as
 * underscores, so "Return Ref" and "return-ref" both mean `return_ref`.
 */
export function normaliseHeader(h: string): string {
  return h
    .trim()
    .toLowerCase()
    .replace(/[\s-]+/g, '_');
}

/** Limits an upload must keep; the server's configuration may lower or raise them. */
export interface IntakeLimits {
  /** Largest single file, in bytes. */
  maxFileBytes: number;
  /** Most data rows in one file or sheet (the header not counted). */
  maxRows: number;
}

/**
 * Defaults. 1,048,575 data rows is what one Excel sheet can hold under its header, so a
 * batch that opens in Excel is never refused for its length; 100 MB covers that many line
 * items as CSV (about 40 bytes a row).
 */
export const DEFAULT_INTAKE_LIMITS: IntakeLimits = { maxFileBytes: 100 * 1024 * 1024, maxRows: 1_048_575 };

/** A file size for messages: "10 kB", "4.5 MB", "100 MB". */
export function sizeText(bytes: number): string {
  if (bytes < 1024 * 1024) return `${Math.max(1, Math.round(bytes / 1024))} kB`;
  const m = bytes / (1024 * 1024);
  return `${m < 10 ? Math.round(m * 10) / 10 : Math.round(m)} MB`;
}

/** Most errors kept and shown for one batch; the rest are counted in an "and N more" line. */
export const MAX_REPORTED_ERRORS = 1000;

// ---------------------------------------------------------------------------------------
// Tax years

/** The tax years the office takes returns for. */
export interface TaxYearRange {
  first: number;
  last: number;
}

/**
 * Aldermere's (invented) rule: a return can be filed once its tax year has ended, and the
 * office takes returns for the ten tax years before the current one.
 *
 * @param today the date the batch is received
 */
export function officeTaxYears(today: Date = new Date()): TaxYearRange {
  const y = today.getUTCFullYear();
  return { first: y - 10, last: y - 1 };
}

// ---------------------------------------------------------------------------------------
// Cell schemas

function show(v: unknown): string {
  const s = String(v ?? '');
  return JSON.stringify(s.length > 40 ? `${s.slice(0, 40)}…` : s);
}

/** A filer's own reference for one return, unique within a batch. */
export const ReturnRefSchema = z.string().check((ctx) => {
  const v = ctx.value;
  if (v === '') ctx.issues.push({ code: 'custom', input: v, message: 'is empty; every row needs the return reference (return_ref) it belongs to' });
  else if (!/^[A-Za-z0-9][A-Za-z0-9._/-]{0,39}$/.test(v)) {
    ctx.issues.push({
      code: 'custom',
      input: v,
      message: `${show(v)} is not a valid return reference: use 1–40 letters, digits, '.', '_', '/' or '-', starting with a letter or digit`,
    });
  }
});

/** Taxpayer identification number: exactly 9 digits, kept as text (leading zeros matter). */
export const TinSchema = z.string().check((ctx) => {
  const v = ctx.value;
  if (/^\d{9}$/.test(v)) return;
  let message: string;
  if (v === '') message = "is empty; every row needs the taxpayer's 9-digit TIN";
  else if (/^\d{1,8}$/.test(v))
    message = `${show(v)} has ${v.length} digits; a TIN has 9. If a leading zero was lost, format the column as Text and enter the TIN again`;
  else if (/^[\d\s.-]+$/.test(v) && v.replace(/\D/g, '').length === 9)
    message = `${show(v)} must be 9 digits without spaces, dots or dashes, e.g. ${v.replace(/\D/g, '')}`;
  else message = `${show(v)} is not a TIN: a TIN is exactly 9 digits`;
  ctx.issues.push({ code: 'custom', input: v, message });
});

/** A tax year within the office's range. */
export function taxYearSchema(years: TaxYearRange) {
  return z.string().transform((v, ctx) => {
    if (!/^\d{4}$/.test(v)) {
      ctx.issues.push({
        code: 'custom',
        input: v,
        message: v === '' ? 'is empty; enter the tax year, e.g. 2024' : `${show(v)} is not a tax year: write the four-digit year, e.g. 2024`,
      });
      return z.NEVER;
    }
    const y = Number(v);
    if (y < years.first || y > years.last) {
      ctx.issues.push({
        code: 'custom',
        input: v,
        message: `${y} is outside the tax years the office takes (${years.first}–${years.last})${y > years.last ? ': a return can be filed only once its tax year has ended' : ''}`,
      });
      return z.NEVER;
    }
    return y;
  });
}

function textSchema(what: string, max: number, required: boolean) {
  return z.string().transform((v, ctx) => {
    if (v === '') {
      if (required) ctx.issues.push({ code: 'custom', input: v, message: `is empty; enter the ${what}` });
      return required ? z.NEVER : null;
    }
    if (v.length > max) ctx.issues.push({ code: 'custom', input: v, message: `is ${v.length} characters long; the ${what} may have at most ${max}` });
    else if (findControlChar(v, { lines: true }))
      ctx.issues.push({ code: 'custom', input: v, message: `contains a control character; remove it from the ${what}` });
    else return v;
    return z.NEVER;
  });
}

const ActivitySchema = z.string().transform((v, ctx) => {
  const lower = v.toLowerCase();
  if ((ACTIVITY_CODES as readonly string[]).includes(lower)) return lower as ActivityCode;
  ctx.issues.push({
    code: 'custom',
    input: v,
    message:
      v === ''
        ? `is empty; use one of: ${ACTIVITY_CODES.join(', ')} (none when there is no business)`
        : `${show(v)} is not an activity code; use one of: ${ACTIVITY_CODES.join(', ')}`,
  });
  return z.NEVER;
});

const PreparerSchema = z.string().transform((v, ctx) => {
  if (v === '') return null; // self-prepared
  if (/^[A-Za-z0-9][A-Za-z0-9._-]{0,39}$/.test(v)) return v;
  ctx.issues.push({
    code: 'custom',
    input: v,
    message: `${show(v)} is not a preparer id: use 1–40 letters, digits, '.', '_' or '-', or leave it blank for a self-prepared return`,
  });
  return z.NEVER;
});

const EMAIL = z.email();

const EmailSchema = z.string().transform((v, ctx) => {
  if (v === '') return null;
  if (v.length <= 254 && EMAIL.safeParse(v).success) return v;
  ctx.issues.push({ code: 'custom', input: v, message: `${show(v)} is not an e-mail address; correct it or leave the cell blank` });
  return z.NEVER;
});

/** A line code from {@link LINE_CODES}, with a hint for near misses. */
export const LineCodeSchema = z.enum(LINE_CODES, {
  error: (iss) => {
    const v = String(iss.input ?? '');
    const near = LINE_CODES.find((c) => c === v.toLowerCase().replace(/[\s_]+/g, '.'));
    return v === ''
      ? 'is empty; enter a line code such as inc.wages'
      : near
        ? `${show(v)} is not a line code; did you mean ${near}? (codes are lower case with dots)`
        : `${show(v)} is not a line code; the codes are: ${LINE_CODES.join(', ')}`;
  },
});

/**
 * An amount as decimal text, checked but kept as text (cents are read after): a plain
 * regular-expression check keeps zod on its fast path for the million-row line items.
 * Leading zeros aside, at most 10 digits before the point, i.e. at most 9999999999.99.
 */
export const AmountTextSchema = z.string().regex(/^-?0*\d{1,10}(\.\d{1,2})?$/, {
  error: (iss) => {
    const v = String(iss.input ?? '');
    return v === '' ? DECIMAL_PROBLEM_TEXT.empty : `${show(v)} ${DECIMAL_PROBLEM_TEXT[decimalProblem(v) ?? 'syntax']}`;
  },
});

/** An amount as decimal text, read to integer cents. */
export const AmountSchema = z.string().transform((v, ctx) => {
  const c = centsFromDecimal(v);
  if (c === c) return c; // not NaN
  ctx.issues.push({
    code: 'custom',
    input: v,
    message: v === '' ? DECIMAL_PROBLEM_TEXT.empty : `${show(v)} ${DECIMAL_PROBLEM_TEXT[decimalProblem(v) ?? 'syntax']}`,
  });
  return z.NEVER;
});

const StatementKindSchema = z.string().transform((v, ctx) => {
  const lower = v.toLowerCase();
  if ((STATEMENT_KINDS as readonly string[]).includes(lower)) return lower as StatementKind;
  ctx.issues.push({
    code: 'custom',
    input: v,
    message: `${v === '' ? 'is empty' : `${show(v)} is not a statement kind`}; use one of: ${STATEMENT_KINDS.join(', ')}`,
  });
  return z.NEVER;
});

// ---------------------------------------------------------------------------------------
// Row schemas

/** One `returns` row, as read. */
export interface ReturnRow {
  returnRef: string;
  tin: string;
  taxYear: number;
  taxpayerName: string;
  activityCode: ActivityCode;
  /** null for a self-prepared return. */
  preparerId: string | null;
  email: string | null;
  postalAddress: string | null;
  /** The date the return was filed (YYYY-MM-DD), or null: the batch's date counts (issue 13). */
  filedOn: string | null;
}

/**
 * The optional filing date: blank, or a real date written YYYY-MM-DD. (An XLSX date cell is
 * refused by the intake with a hint to format the column as Text.)
 */
const FiledOnSchema = z
  .string()
  .optional()
  .transform((v, ctx) => {
    if (v === undefined || v === '') return null;
    const ok = /^\d{4}-\d{2}-\d{2}$/.test(v) && !Number.isNaN(Date.parse(`${v}T00:00:00Z`)) && new Date(`${v}T00:00:00Z`).toISOString().slice(0, 10) === v;
    if (ok) return v;
    ctx.issues.push({
      code: 'custom',
      input: v,
      message: `${show(v)} is not a date: write the filing date as YYYY-MM-DD, e.g. 2025-04-15, or leave the cell blank`,
    });
    return z.NEVER;
  });

/** Schema for a `returns` row, for the office's tax-year range. */
export function returnRowSchema(years: TaxYearRange): z.ZodType<ReturnRow, Record<string, string>> {
  return z
    .object({
      return_ref: ReturnRefSchema,
      tin: TinSchema,
      tax_year: taxYearSchema(years),
      taxpayer_name: textSchema('taxpayer name', 200, true),
      activity_code: ActivitySchema,
      preparer_id: PreparerSchema,
      email: EmailSchema,
      postal_address: textSchema('postal address', 300, false),
      filed_on: FiledOnSchema,
    })
    .check((ctx) => {
      const r = ctx.value;
      if (r.filed_on && Number(r.filed_on.slice(0, 4)) <= r.tax_year) {
        ctx.issues.push({
          code: 'custom',
          input: r.filed_on,
          path: ['filed_on'],
          message: `${show(r.filed_on)} is within tax year ${r.tax_year}: a return is filed after its tax year ends`,
        });
      }
    })
    .transform((r) => ({
      returnRef: r.return_ref,
      tin: r.tin,
      taxYear: r.tax_year,
      taxpayerName: r.taxpayer_name as string,
      activityCode: r.activity_code,
      preparerId: r.preparer_id,
      email: r.email,
      postalAddress: r.postal_address,
      filedOn: r.filed_on,
    }));
}

/** One `line_items` row, as read: the amount in integer cents. */
export interface LineItemRow {
  returnRef: string;
  lineCode: LineCode;
  cents: number;
}

/** Schema for a `line_items` row. */
export const LineItemRowSchema: z.ZodType<LineItemRow, Record<string, string>> = z
  .object({ return_ref: ReturnRefSchema, line_code: LineCodeSchema, amount: AmountTextSchema })
  .check((ctx) => {
    const r = ctx.value;
    if (r.amount.charCodeAt(0) === 45 /* - */ && !LINE_CODE_DEFS[r.line_code].negativeAllowed && centsFromDecimal(r.amount) !== 0) {
      ctx.issues.push({
        code: 'custom',
        input: r.amount,
        path: ['amount'],
        message: `is negative; ${r.line_code} is entered as a positive amount (only tot.income may be negative, for a business loss)`,
      });
    }
  })
  .transform((r) => ({ returnRef: r.return_ref, lineCode: r.line_code, cents: centsFromDecimal(r.amount) }));

/** Position of each line code in {@link LINE_CODES}, as a Map (no prototype keys such as "constructor"). */
const LINE_CODE_POSITION: ReadonlyMap<string, number> = new Map(LINE_CODES.map((c, i) => [c, i]));
/** Bit per code position: set when the code may be negative. */
const NEGATIVE_ALLOWED_MASK = LINE_CODES.reduce((m, c, i) => (LINE_CODE_DEFS[c].negativeAllowed ? m | (1 << i) : m), 0);

/**
 * Position of `code` in {@link LINE_CODES}, or -1 when it is not a line code (exactly the
 * texts {@link LineCodeSchema} accepts).
 */
export function lineCodePosition(code: string): number {
  const i = LINE_CODE_POSITION.get(code);
  return i === undefined ? -1 : i;
}

/**
 * The return-reference rule of {@link ReturnRefSchema} (`^[A-Za-z0-9][A-Za-z0-9._/-]{0,39}$`)
 * as a character scan.
 */
function isReturnRef(v: string): boolean {
  const len = v.length;
  if (len === 0 || len > 40) return false;
  for (let i = 0; i < len; i++) {
    const c = v.charCodeAt(i);
    if ((c >= 48 && c <= 57) || (c >= 65 && c <= 90) || (c >= 97 && c <= 122)) continue;
    if (i > 0 && (c === 46 /* . */ || c === 95 /* _ */ || c === 47 /* / */ || c === 45) /* - */) continue;
    return false;
  }
  return true;
}

/**
 * The fast path of {@link LineItemRowSchema} for the million-row line items: the same rules
 * as plain scans, with no objects made. It returns the row's cents only when the schema
 * certainly accepts the row (and would give the same cents); otherwise NaN, and the caller
 * runs the schema itself, which gives the verdict and the exact messages. A property test
 * (tests/unit/returns/batch-rows-fast.test.ts) checks it against the schema.
 *
 * @param codePosition {@link lineCodePosition} of the line_code cell
 */
export function lineItemCentsFast(returnRef: string, codePosition: number, amount: string): number {
  if (codePosition < 0 || !isReturnRef(returnRef)) return NaN;
  // centsFromDecimal accepts exactly the texts of AmountTextSchema's pattern (at most ten
  // significant digits before the point is the same as at most 9999999999.99).
  const cents = centsFromDecimal(amount);
  if (cents < 0 && ((NEGATIVE_ALLOWED_MASK >> codePosition) & 1) === 0) return NaN;
  return cents;
}

/** One `statements` row (a third party's report about a taxpayer), as read. */
export interface StatementRow {
  tin: string;
  taxYear: number;
  kind: StatementKind;
  payer: string;
  cents: number;
}

/** Schema for a `statements` row. */
export function statementRowSchema(years: TaxYearRange): z.ZodType<StatementRow, Record<string, string>> {
  return z
    .object({
      tin: TinSchema,
      tax_year: taxYearSchema(years),
      kind: StatementKindSchema,
      payer: textSchema('payer name', 200, true),
      amount: AmountSchema,
    })
    .check((ctx) => {
      if (ctx.value.amount < 0)
        ctx.issues.push({
          code: 'custom',
          input: ctx.value.amount,
          path: ['amount'],
          message: 'is negative; a statement reports an amount paid, entered as a positive number',
        });
    })
    .transform((r) => ({ tin: r.tin, taxYear: r.tax_year, kind: r.kind, payer: r.payer as string, cents: r.amount }));
}

// ---------------------------------------------------------------------------------------
// API answers (docs/design.md#api-contract)

/** Batch states: received → validating → rejected | queued → scoring → scored. */
export const BATCH_STATES = ['received', 'validating', 'rejected', 'queued', 'scoring', 'scored'] as const;
export const BatchStateSchema = z.enum(BATCH_STATES);
export type BatchState = z.infer<typeof BatchStateSchema>;

/** One problem (or notice) in a batch: where it is and what to do. */
export const BatchIssueSchema = z.object({
  /** The file (or "workbook.xlsx › sheet") it is in; "" for the whole upload. */
  file: z.string(),
  /** Row as a spreadsheet shows it (the header is row 1); null for a whole-file problem. */
  row: z.number().int().nullable(),
  /** Column name from the header; null when the problem is not one cell's. */
  column: z.string().nullable(),
  message: z.string(),
  /** The cell's text as uploaded (shortened), when the problem is one cell's. */
  value: z.string().nullable().optional(),
});
export type BatchIssue = z.infer<typeof BatchIssueSchema>;

/** Every digit but the last three replaced by "•" (separators kept): "012-345-678" → "•••-•••-678". */
function maskDigits(text: string): string {
  const total = (text.match(/\d/g) ?? []).length;
  let seen = 0;
  return text.replace(/\d/g, (d) => (++seen <= total - 3 ? '•' : d));
}

/**
 * An issue as the batch screens and the report list it: a value in the tin column (and any
 * run of 5 or more digits in its message; years stay) shows only its last three digits, and
 * so does a 9-digit run in any other column but amounts (a TIN typed into the wrong column).
 * The row and column still point to the cell; the clerk has the file itself.
 */
export function maskIssueForListing(issue: BatchIssue): BatchIssue {
  const tinColumn = issue.column === 'tin';
  if (!tinColumn && issue.column === 'amount') return issue;
  const mask = (text: string) =>
    tinColumn
      ? text.replace(/\d(?:[\d .-]*\d)?/g, (run) => ((run.match(/\d/g) ?? []).length >= 5 ? maskDigits(run) : run))
      : text.replace(/(?<!\d)\d{9}(?!\d)/g, maskDigits);
  return { ...issue, message: mask(issue.message), ...(issue.value == null ? {} : { value: mask(issue.value) }) };
}

export const BatchCountsSchema = z.object({
  returns: z.number().int(),
  lineItems: z.number().int(),
  statements: z.number().int(),
});

/** A batch in the list. */
export const BatchSummarySchema = z.object({
  id: z.string(),
  state: BatchStateSchema,
  format: z.enum(['xlsx', 'csv']),
  fileNames: z.array(z.string()),
  counts: BatchCountsSchema,
  /** Returns that amend one already on file for the same TIN and tax year. */
  amendedReturns: z.number().int(),
  progress: z.object({ scored: z.number().int(), total: z.number().int() }),
  errorCount: z.number().int(),
  loadedBy: z.object({ id: z.string(), displayName: z.string() }).nullable(),
  createdAt: z.string(),
  /** The office's running number of the batch (1, 2, 3…), in upload order. */
  batchNo: z.number().int(),
  /** What people call the batch: the label given at upload, or {@link defaultBatchLabel}. */
  label: z.string(),
  /** While it is being checked: data rows read so far, over every table. */
  rowsChecked: z.number().int(),
  /** Seconds since the upload began, by the office clock (while it is being checked). */
  elapsedSeconds: z.number().int(),
  /** Checking has shown no progress for {@link INTAKE_STALLED_AFTER_SECONDS}: it will not finish by itself. */
  stalled: z.boolean(),
});
export type BatchSummary = z.infer<typeof BatchSummarySchema>;

/** A check that runs longer than this shows its elapsed time and rows checked (common practice, no source). */
export const INTAKE_SLOW_AFTER_SECONDS = 30;
/**
 * With no row read for this long, a batch's check is taken as stalled: the intake reports its
 * progress about every second while it reads, so five minutes of silence means it stopped.
 */
export const INTAKE_STALLED_AFTER_SECONDS = 300;

/** Longest label a batch may be given. */
export const BATCH_LABEL_MAX = 80;

/** The label asked at upload; blank means "use the default". */
export const BatchLabelSchema = z
  .string()
  .trim()
  .max(BATCH_LABEL_MAX, `Keep the label to ${BATCH_LABEL_MAX} characters, e.g. "Post room, March returns"`)
  .check(noControlChars());

/** The label as it will be stored (trimmed; "" for none), or what is wrong with it in a sentence. */
export function checkBatchLabel(raw: string): { label: string } | { problem: string } {
  const r = BatchLabelSchema.safeParse(raw);
  if (r.success) return { label: r.data };
  const m = r.error.issues[0].message;
  return { problem: /^[A-Z]/.test(m) ? m : `The label ${m}` };
}

/**
 * A batch's name when none was given at upload: the office's batch number, the office day it
 * came in (YYYY-MM-DD) and its source (a workbook or CSV files), e.g.
 * "Batch 12 · 2 Dec 2026 · workbook".
 */
export function defaultBatchLabel(batchNo: number, officeDay: string, format: 'xlsx' | 'csv'): string {
  const date = new Date(`${officeDay}T00:00:00Z`).toLocaleDateString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });
  return `Batch ${batchNo} · ${date} · ${format === 'xlsx' ? 'workbook' : 'CSV files'}`;
}

/** Score bands of the batch's distribution: 0–10, 10–20, … 90–100 (the last includes 100). */
export const SCORE_BAND_WIDTH = 10;

/** One band of a scored batch's score distribution. */
export const ScoreBandSchema = z.object({
  /** Lower edge (included); the upper edge is `from + SCORE_BAND_WIDTH` (excluded, but 100 is in the last band). */
  from: z.number(),
  /** Returns scored in the band. */
  returns: z.number().int(),
  /** Of those, returns whose case was opened. */
  cases: z.number().int(),
});
export type ScoreBand = z.infer<typeof ScoreBandSchema>;

/** What scoring made of a batch: the cases opened and how the scores spread. */
export const BatchOutcomeSchema = z.object({
  /** The profile version the figures are under (the batch's latest run). */
  profileVersion: z.number().int(),
  casesOpened: z.number().int(),
  /** Scores that could not be computed (each has its reason on the return). */
  failed: z.number().int(),
  bands: z.array(ScoreBandSchema),
  median: z.number().nullable(),
});
export type BatchOutcome = z.infer<typeof BatchOutcomeSchema>;

/** `GET /api/batches/:id`: the summary with its validation report. */
export const BatchDetailSchema = BatchSummarySchema.extend({
  /** Every error up to {@link MAX_REPORTED_ERRORS}, then one "and N more" line. */
  errors: z.array(BatchIssueSchema),
  /** Things the clerk should know that do not reject the batch (amended returns). */
  notices: z.array(BatchIssueSchema),
  /** Once a scoring run has stored scores: cases opened and the score distribution; else null. */
  outcome: BatchOutcomeSchema.nullable(),
});
export type BatchDetail = z.infer<typeof BatchDetailSchema>;

/** `GET /api/batches`. */
export const BatchListSchema = z.object({
  items: z.array(BatchSummarySchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});
export type BatchList = z.infer<typeof BatchListSchema>;

export const BatchListQuerySchema = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});

/** `POST /api/batches` → 201. */
export const BatchCreatedSchema = z.object({ id: z.string(), state: BatchStateSchema, counts: BatchCountsSchema, amendedReturns: z.number().int() });
export type BatchCreated = z.infer<typeof BatchCreatedSchema>;

/** `POST /api/batches` → 422: the batch was rejected whole (batchId null when no batch was recorded). */
export const BatchRejectedSchema = z.object({
  error: z.string(),
  batchId: z.string().nullable(),
  errorCount: z.number().int(),
  errors: z.array(BatchIssueSchema),
});
export type BatchRejected = z.infer<typeof BatchRejectedSchema>;

/** `POST /api/batches` → 409: the same file was uploaded before. */
export const BatchDuplicateSchema = z.object({ error: z.string(), batchId: z.string() });

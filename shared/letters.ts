/**
 * Letters contract (docs/design.md#letters-and-replies, docs/design.md#api-contract):
 * document requests sent to taxpayers, referral memos kept with a case, and the
 * taxpayer's one-time reply link. The server
 * validates with these schemas and the app's forms use the same ones through zodResolver,
 * so a rule (e.g. the due-date window) is written once.
 */
import { z } from 'zod';
import { noControlChars } from './text';

/** The office as letters, e-mails and the reply page name it (invented, like all of Aldermere). */
export const OFFICE = {
  name: 'Aldermere Revenue Office',
  unit: 'Examinations Section',
  address: ['14 Weighhouse Lane', 'Aldermere AXX 000'],
  phone: '+44 1632 960 418',
  email: 'examinations@revenue.aldermere.example',
  hours: 'Monday to Friday, 9:00 to 16:30',
} as const;

/**
 * Due-date window for a document request, in whole days from today. A week is the least
 * time in which a person can reasonably find and copy records; beyond 90 days the request
 * would outlive the examination it serves.
 */
export const DUE_DATE_MIN_DAYS = 7;
export const DUE_DATE_MAX_DAYS = 90;

/** Reply upload limits, shown on the reply page and enforced by the server. */
export const REPLY_MAX_FILES = 8;
export const REPLY_MAX_FILE_BYTES = 10 * 1024 * 1024;
/** All files of one reply together (the server refuses larger bodies before reading them). */
export const REPLY_MAX_TOTAL_BYTES = 30 * 1024 * 1024;
/** What a taxpayer may send: scans and exports of records. Checked by content, not only by name. */
export const REPLY_FILE_TYPES = [
  'application/pdf',
  'image/jpeg',
  'image/png',
  'text/csv',
  'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
] as const;
export type ReplyFileType = (typeof REPLY_FILE_TYPES)[number];
/** The accepted types in words, for letters, the reply page and refusals. */
export const REPLY_FILE_WORDS = 'PDF, JPEG, PNG, CSV or XLSX';
/**
 * Name endings the reply page offers. Browsers declare CSV under several types (text/csv,
 * application/vnd.ms-excel, none), so the page also goes by the name; the server checks content.
 */
export const REPLY_FILE_ENDINGS = ['.pdf', '.jpg', '.jpeg', '.png', '.csv', '.xlsx'] as const;

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

/** Today's calendar date where this code runs, as YYYY-MM-DD (local time, not UTC). */
export function isoToday(now: Date = new Date()): string {
  const p = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${p(now.getMonth() + 1)}-${p(now.getDate())}`;
}

/** Whole days from `from` to `to` (both YYYY-MM-DD); negative when `to` is earlier. */
export function daysBetween(from: string, to: string): number {
  const a = Date.UTC(Number(from.slice(0, 4)), Number(from.slice(5, 7)) - 1, Number(from.slice(8, 10)));
  const b = Date.UTC(Number(to.slice(0, 4)), Number(to.slice(5, 7)) - 1, Number(to.slice(8, 10)));
  return Math.round((b - a) / 86_400_000);
}

/** YYYY-MM-DD that is `days` after `from`. */
export function addDays(from: string, days: number): string {
  const d = new Date(Date.UTC(Number(from.slice(0, 4)), Number(from.slice(5, 7)) - 1, Number(from.slice(8, 10)) + days));
  return d.toISOString().slice(0, 10);
}

/** A real calendar date in YYYY-MM-DD (rejects 2025-02-30). */
export const CalendarDateSchema = z
  .string()
  .regex(ISO_DATE, 'Use the form YYYY-MM-DD, e.g. 2026-03-31')
  .refine((s) => {
    // Text that is not YYYY-MM-DD already has its issue from the pattern.
    if (!ISO_DATE.test(s)) return true;
    const d = new Date(`${s}T00:00:00Z`);
    return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s;
  }, 'That date does not exist');

/** "31 March 2026": how letters and the reply page write a date. */
export function longDate(iso: string): string {
  const months = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December'];
  return `${Number(iso.slice(8, 10))} ${months[Number(iso.slice(5, 7)) - 1]} ${iso.slice(0, 4)}`;
}

/**
 * Body of `POST /api/cases/:id/document-requests`, checked against a given today. `email`
 * may be left empty: the letter then goes to the address on file (`emailRequired`: there is
 * none, so the form asks for one). The due date must fall
 * DUE_DATE_MIN_DAYS to DUE_DATE_MAX_DAYS days from today. The server passes the office
 * clock's today (server/clock.ts) and the app the office's today from
 * `GET /api/cases/:id/letter-context`, so the form and the server agree whatever the
 * browser's own date is.
 */
export function documentRequestInputSchema(today: () => string, opts: { emailRequired?: boolean } = {}) {
  return z
    .object({
      items: z
        .array(z.string().trim().min(3, 'Describe the record in a few words').max(300, 'Keep each item under 300 characters').check(noControlChars()))
        .min(1, 'Ask for at least one record')
        .max(12, 'Ask for at most 12 records in one letter'),
      dueDate: CalendarDateSchema,
      email: z.union([z.literal(''), z.email('Enter a full e-mail address, e.g. name@example.org').max(254)]).optional(),
    })
    .superRefine((v, ctx) => {
      // The form knows when no address is on file and asks for one before Send (issue 14).
      if (opts.emailRequired && !v.email)
        ctx.addIssue({
          code: 'custom',
          path: ['email'],
          message: 'No e-mail address is on file for this taxpayer: enter the address the request should go to',
        });
      // A date that is not a real calendar date already has its issue.
      if (!CalendarDateSchema.safeParse(v.dueDate).success) return;
      const t = today();
      const days = daysBetween(t, v.dueDate);
      if (days < DUE_DATE_MIN_DAYS)
        ctx.addIssue({
          code: 'custom',
          path: ['dueDate'],
          message: `Give the taxpayer at least ${DUE_DATE_MIN_DAYS} days: choose ${longDate(addDays(t, DUE_DATE_MIN_DAYS))} or later`,
        });
      if (days > DUE_DATE_MAX_DAYS)
        ctx.addIssue({
          code: 'custom',
          path: ['dueDate'],
          message: `Choose a due date within ${DUE_DATE_MAX_DAYS} days, by ${longDate(addDays(t, DUE_DATE_MAX_DAYS))}`,
        });
    });
}

/** {@link documentRequestInputSchema} against the date where this code runs (for documentation and old callers). */
export const DocumentRequestInputSchema = documentRequestInputSchema(() => isoToday());
export type DocumentRequestInput = z.infer<typeof DocumentRequestInputSchema>;

/**
 * Words a letter to a taxpayer should not carry: letters ask for records and never mention
 * scores, digit tests, patterns, risk or suspicion (docs/design.md#letters-and-replies).
 * Each entry matches the word and its usual inflections, whole words only, so "digital
 * copies" or "riskless" are not caught by "digit" or "risk".
 */
export const FLAGGED_LETTER_WORDS: readonly { word: string; pattern: RegExp }[] = [
  { word: 'risk', pattern: /\brisk(?:s|y|ier|iest)?\b/i },
  { word: 'score', pattern: /\bscor(?:e|es|ed|ing)\b/i },
  { word: 'digit', pattern: /\bdigits?\b/i },
  { word: 'pattern', pattern: /\bpatterns?\b/i },
  { word: 'Benford', pattern: /\bbenford(?:'s)?\b/i },
  { word: 'fraud', pattern: /\bfraud(?:s|ulent|ulently)?\b/i },
  { word: 'suspicion', pattern: /\bsuspic(?:ion|ions|ious|iously)\b/i },
  { word: 'suspect', pattern: /\bsuspect(?:s|ed)?\b/i },
  { word: 'penalty', pattern: /\bpenalt(?:y|ies)\b/i },
  { word: 'evasion', pattern: /\b(?:evasion|evade|evaded|evading)\b/i },
  { word: 'anomaly', pattern: /\banomal(?:y|ies|ous)\b/i },
  { word: 'deviation', pattern: /\bdeviat(?:ion|ions|es|ed|ing)\b/i },
  { word: 'statistics', pattern: /\bstatistic(?:s|al|ally)?\b/i },
  { word: 'algorithm', pattern: /\balgorithm(?:s|ic)?\b/i },
  { word: 'flagged', pattern: /\bflag(?:s|ged)?\b/i },
  { word: 'investigation', pattern: /\binvestigat(?:e|es|ed|ion|ions)\b/i },
  { word: 'criminal', pattern: /\bcrim(?:e|es|inal)\b/i },
];

/**
 * The flagged words found in a text an examiner typed for a letter (a requested item), in
 * the list's order, each once. A soft check: the form shows a warning and still sends.
 *
 * @example flaggedLetterWords('Receipts behind the risky round amounts') // ['risk']
 */
export function flaggedLetterWords(text: string): string[] {
  return FLAGGED_LETTER_WORDS.filter((f) => f.pattern.test(text)).map((f) => f.word);
}

/** The requested items that contain flagged words, with the words, for the API's `warnings`. */
export function letterItemWarnings(items: readonly string[]): { item: number; words: string[] }[] {
  return items.flatMap((text, item) => {
    const words = flaggedLetterWords(text);
    return words.length ? [{ item, words }] : [];
  });
}

/** The warning shown under an item that contains flagged words; null when there are none. */
export function flaggedLetterWarning(text: string): string | null {
  const words = flaggedLetterWords(text);
  if (!words.length) return null;
  const list = words.map((w) => `"${w}"`).join(', ');
  return `This item mentions ${list}. Letters ask for records and never mention scores, tests, patterns or suspicions; consider rewording it. You can still send it.`;
}

/**
 * Specialist units a case can be referred to. The keys are API values already stored in
 * case events, so they stay; the labels are Aldermere's own names (invented, like the
 * office), not any real organisation's units.
 */
export const REFERRAL_UNITS = ['field-audit', 'income-matching', 'special-investigations'] as const;
export const ReferralUnitSchema = z.enum(REFERRAL_UNITS);
export type ReferralUnit = z.infer<typeof ReferralUnitSchema>;
export const REFERRAL_UNIT_LABELS: Record<ReferralUnit, string> = {
  'field-audit': 'Ledger Visit Team',
  'income-matching': 'Cross-Check Team',
  'special-investigations': 'Deep Review Team',
};

/** Body of `POST /api/cases/:id/referral`: where the case goes and why, in the examiner's words. */
export const ReferralInputSchema = z.object({
  unit: ReferralUnitSchema.default('field-audit'),
  summary: z
    .string()
    .trim()
    .min(20, 'Say in a sentence or two why the case needs the unit (at least 20 characters)')
    .max(4000, 'Keep the summary under 4,000 characters')
    .check(noControlChars({ lines: true })),
});
/** What the form holds (unit may be left to its default). */
export type ReferralInput = z.input<typeof ReferralInputSchema>;

/** What a letter is: a request to the taxpayer, or an internal memo to a unit. */
export const LETTER_KINDS = ['document_request', 'referral_memo', 'reminder', 'acknowledgement', 'no_change', 'adjustment_proposal'] as const;
export const LetterKindSchema = z.enum(LETTER_KINDS);
export type LetterKind = z.infer<typeof LetterKindSchema>;
export const LETTER_KIND_LABELS: Record<LetterKind, string> = {
  document_request: 'Document request',
  referral_memo: 'Referral memo',
  reminder: 'Reminder',
  acknowledgement: 'Acknowledgement',
  no_change: 'No-change letter',
  adjustment_proposal: 'Adjustment proposal',
};

/** Stored state of a document request; `expired` is also reported for an unanswered one past its due date. */
export const DOCUMENT_REQUEST_STATES = ['sent', 'answered', 'expired'] as const;
export const DocumentRequestStateSchema = z.enum(DOCUMENT_REQUEST_STATES);
export type DocumentRequestState = z.infer<typeof DocumentRequestStateSchema>;

/** A file a taxpayer sent back, as staff see it. */
export const ReplyUploadSchema = z.object({
  id: z.string(),
  fileName: z.string(),
  contentType: z.enum(REPLY_FILE_TYPES),
  size: z.number().int(),
  sha256: z.string(),
  /** Which send through the link brought it (1 for the first). */
  part: z.number().int(),
  createdAt: z.string(),
});
export type ReplyUploadDto = z.infer<typeof ReplyUploadSchema>;

/** One letter kept with a case. */
export const LetterSchema = z.object({
  id: z.string(),
  caseId: z.string(),
  kind: LetterKindSchema,
  /** E-mail address for a document request; the unit for a referral memo. */
  recipient: z.string(),
  sha256: z.string(),
  size: z.number().int(),
  createdAt: z.string(),
  createdBy: z.object({ id: z.string(), displayName: z.string() }).nullable(),
  documentRequest: z
    .object({
      id: z.string(),
      items: z.array(z.string()),
      dueDate: z.string(),
      state: DocumentRequestStateSchema,
      answeredAt: z.string().nullable(),
      /** How many sends came through the link (records may come in parts). */
      sends: z.number().int(),
      /** Who ended the sends: the taxpayer said that is everything, or the due date passed; null while open. */
      completedBy: z.enum(['taxpayer', 'due-date']).nullable(),
      uploads: z.array(ReplyUploadSchema),
    })
    .nullable(),
});
export type LetterDto = z.infer<typeof LetterSchema>;

/** `GET /api/cases/:id/letters`: newest first. */
export const LetterListSchema = z.object({ items: z.array(LetterSchema) });
export type LetterList = z.infer<typeof LetterListSchema>;

/** One requested item that contains flagged words (see {@link flaggedLetterWords}); `item` is its index. */
export const LetterWordWarningSchema = z.object({ item: z.number().int().min(0), words: z.array(z.string()) });
export type LetterWordWarning = z.infer<typeof LetterWordWarningSchema>;

/**
 * Answer of the two letter-making routes: the letter and the case's new state. A document
 * request also lists `warnings` for items with flagged words (sent all the same: a soft check).
 */
export const LetterCreatedSchema = z.object({ letter: LetterSchema, caseState: z.string(), warnings: z.array(LetterWordWarningSchema).optional() });
export type LetterCreated = z.infer<typeof LetterCreatedSchema>;

/**
 * `GET /api/replies/:token` while the link is usable: only what the taxpayer needs to
 * answer (their name, the records asked for, the due date, the office). No TIN, no figures.
 */
export const ReplyRequestSchema = z.object({
  state: z.literal('open'),
  taxpayerName: z.string(),
  items: z.array(z.string()),
  dueDate: z.string(),
  /** What already came through this link, send by send (records may come in parts). */
  received: z.array(z.object({ part: z.number().int(), at: z.string(), files: z.array(z.object({ fileName: z.string(), size: z.number().int() })) })),
  office: z.object({ name: z.string(), unit: z.string(), address: z.array(z.string()), phone: z.string(), email: z.string(), hours: z.string() }),
  limits: z.object({ maxFiles: z.number().int(), maxFileBytes: z.number().int(), maxTotalBytes: z.number().int(), types: z.array(z.string()) }),
});
export type ReplyRequestDto = z.infer<typeof ReplyRequestSchema>;

/** 410 answer for a link that can no longer be used. */
export const ReplyClosedSchema = z.object({ error: z.string(), state: z.enum(['answered', 'expired']) });
export type ReplyClosed = z.infer<typeof ReplyClosedSchema>;

/**
 * `POST /api/replies/:token` answer. A link takes several sends until the due date or until
 * the taxpayer says that is everything (`complete`); each send is acknowledged by e-mail
 * (`acknowledgement`: 'mailed', or 'not-mailed' when the mail server was not reachable: the
 * records are kept all the same and this answer is the receipt).
 */
export const ReplyReceiptSchema = z.object({
  received: z.array(z.object({ fileName: z.string(), size: z.number().int(), sha256: z.string() })),
  receivedAt: z.string(),
  part: z.number().int(),
  complete: z.boolean(),
  dueDate: z.string(),
  acknowledgement: z.enum(['mailed', 'not-mailed']),
});
export type ReplyReceipt = z.infer<typeof ReplyReceiptSchema>;

/** What the taxpayer's reply page may send: checks a file's declared type, size and name. */
export function replyFileProblem(file: { name: string; type: string; size: number }): string | null {
  const named = REPLY_FILE_ENDINGS.some((e) => file.name.toLowerCase().endsWith(e));
  if (!(REPLY_FILE_TYPES as readonly string[]).includes(file.type) && !named) return `${file.name}: send ${REPLY_FILE_WORDS} files only.`;
  if (file.size === 0) return `${file.name} is empty.`;
  if (file.size > REPLY_MAX_FILE_BYTES) return `${file.name} is larger than ${REPLY_MAX_FILE_BYTES / 1024 / 1024} MB.`;
  return null;
}

/** Days an adjustment proposal gives the taxpayer to answer. */
export const PROPOSAL_ANSWER_DAYS = 30;

/**
 * `GET /api/cases/:id/letter-context`: what the request form needs before Send: the office's
 * today (its due-date window is checked against it, not the browser's date) and the
 * taxpayer's e-mail address on file (null when none is).
 */
export const LetterContextSchema = z.object({
  today: z.string(),
  emailOnFile: z.string().nullable(),
  earliestDueDate: z.string(),
  latestDueDate: z.string(),
});
export type LetterContext = z.infer<typeof LetterContextSchema>;

/**
 * `POST /api/cases/:id/document-requests/preview` and `POST /api/cases/:id/closing-letter/preview`:
 * the letter as it would be sent, not sent. `to` is where it goes (null: no address on file;
 * a closing letter is then kept for post), with its subject and plain text.
 */
export const LetterPreviewSchema = z.object({
  kind: LetterKindSchema,
  to: z.string().nullable(),
  subject: z.string(),
  text: z.string(),
});
export type LetterPreview = z.infer<typeof LetterPreviewSchema>;

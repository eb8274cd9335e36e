/**
 * The access log contract: who viewed or changed which taxpayer's data, when.
 */
import { z } from 'zod';
import { noControlChars } from './text';
import { RoleSchema } from './roles';

export const ACCESS_ACTIONS = ['view', 'change', 'export', 'sign-in', 'sign-out', 'sign-in-refused', 'reveal-tin'] as const;
export const AccessActionSchema = z.enum(ACCESS_ACTIONS);
export type AccessAction = z.infer<typeof AccessActionSchema>;

/**
 * What an access-log line is about, one name per kind of record (the table's name where
 * there is one), so the administrator's log never calls one thing by two names.
 * `case-queue` is a filtered set of cases (an export), not one record.
 */
export const ACCESS_RECORD_TYPES = [
  'case',
  'case-queue',
  'filing_batch',
  'letter',
  'reply_upload',
  'document_request',
  'scoring_profile',
  'user',
  'saved_view',
  /** The access log itself: its export is logged (issue 14). */
  'access-log',
  /** Amounts of returns read as a pool for a digit analysis (a preparer's, a line code's, a taxpayer's years). */
  'line_item',
] as const;
export const AccessRecordTypeSchema = z.enum(ACCESS_RECORD_TYPES);
export type AccessRecordType = z.infer<typeof AccessRecordTypeSchema>;

export const AccessLogEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  userId: z.string().nullable(),
  username: z.string().nullable(),
  role: RoleSchema.nullable(),
  action: AccessActionSchema,
  route: z.string(),
  recordType: z.string().nullable(),
  recordId: z.string().nullable(),
  taxpayerId: z.string().nullable(),
  /** Masked TIN (last 3 digits) of the taxpayer concerned, if any. */
  taxpayerLabel: z.string().nullable(),
  detail: z.string().nullable(),
  /**
   * One row is one thing a person did (issue 14): the lines written by the API reads behind one
   * screen (a case and its letters, a page of the queue) are grouped. The fields above are
   * those of the group's first line; `at` is its last.
   */
  firstAt: z.string(),
  /** Lines in the group. */
  lines: z.number().int(),
  /** Cases the group touched (a page of the queue: 25). */
  cases: z.number().int(),
  /** The return reference, when the group is about one case. */
  returnRef: z.string().nullable(),
  /** What was done, in plain words ({@link describeAccess}). */
  summary: z.string(),
});
export type AccessLogEntry = z.infer<typeof AccessLogEntrySchema>;

/** A real calendar date written YYYY-MM-DD. */
const isoDate = z
  .string()
  .trim()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Use YYYY-MM-DD')
  .refine((v) => {
    const d = new Date(`${v}T00:00:00Z`);
    return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === v;
  }, 'There is no such date; check the day and month (YYYY-MM-DD)');

/** The filters of the log's screen and of its export. */
const AccessLogFilterShape = {
  user: z.string().trim().max(64, 'Give at most 64 characters of a user name').check(noControlChars()).optional(),
  taxpayer: z.string().trim().max(64, 'Give a taxpayer id or the last digits of a TIN').check(noControlChars()).optional(),
  from: isoDate.optional(),
  to: isoDate.optional(),
  action: AccessActionSchema.optional(),
};

/** "from" after "to" is an error on "to", where the person fixes it. */
function datesInOrder(v: { from?: string; to?: string }, ctx: z.RefinementCtx): void {
  if (v.from && v.to && v.from > v.to)
    ctx.addIssue({ code: 'custom', path: ['to'], message: `The end date comes before the start date (${v.from}); choose a later one` });
}

export const AccessLogQuerySchema = z
  .object({
    ...AccessLogFilterShape,
    page: z.coerce.number().int().min(1).default(1),
    pageSize: z.coerce.number().int().min(1).max(200).default(50),
  })
  .superRefine(datesInOrder);
export type AccessLogQuery = z.infer<typeof AccessLogQuerySchema>;

/** Query of `GET /api/access-log/export.xlsx`: the same filters, every row. */
export const AccessLogExportQuerySchema = z.object(AccessLogFilterShape).superRefine(datesInOrder);
export type AccessLogExportQuery = z.infer<typeof AccessLogExportQuerySchema>;

/** The most rows one export holds; narrow the dates for more (the sheet stays quick to open). */
export const ACCESS_LOG_EXPORT_MAX_ROWS = 100_000;

/** Plain words for each action, as the filter offers them. */
export const ACCESS_ACTION_WORDS: Record<AccessAction, string> = {
  view: 'Looked at',
  change: 'Changed',
  export: 'Exported',
  'sign-in': 'Signed in',
  'sign-out': 'Signed out',
  'sign-in-refused': 'Sign-in refused',
  'reveal-tin': 'Showed a full TIN',
};

/** A group of access-log lines, as {@link describeAccess} reads it. */
export interface AccessGroup {
  action: AccessAction;
  route: string;
  recordType: string | null;
  detail: string | null;
  /** The routes of the group with ids written as ":id" (which parts of a screen were read). */
  routes: string[];
  cases: number;
  returnRef: string | null;
  /** Anonymous lines are the taxpayer's (reply link) or the system's (daily pass). */
  anonymous: boolean;
}

const stateText = (t: string) => t.replace(/_/g, ' ');

/** What part of a case a route read. */
const CASE_PARTS: [RegExp, string][] = [
  [/^GET \/api\/cases\/:id$/, 'the case'],
  [/^GET \/api\/cases\/:id\/letters$/, 'its letters'],
  [/^GET \/api\/cases\/:id\/letters\/:id\/pdf$/, 'a letter (PDF)'],
  [/^GET \/api\/cases\/:id\/reply-uploads\/:id$/, 'a reply file'],
  [/^POST \/api\/cases\/:id\/.*preview$/, 'a letter preview'],
];

/**
 * One group of access-log lines in plain words, with the return reference and without ids or
 * paths: "Opened case ALD-2024-000017 (the case, its letters)", "Looked through the queue (25
 * cases shown)". Kinds it does not know fall back to the action and the line's own detail.
 */
export function describeAccess(g: AccessGroup): string {
  const caseName = g.returnRef ? `case ${g.returnRef}` : g.cases > 1 ? `${g.cases} cases` : 'a case';
  const detail = g.detail ?? '';
  const plus = detail ? ` (${detail})` : '';
  switch (g.action) {
    case 'sign-in':
      return 'Signed in';
    case 'sign-out':
      return 'Signed out';
    case 'sign-in-refused':
      return `Sign-in refused${plus}`;
    case 'reveal-tin':
      return `Showed the full TIN on ${caseName}`;
    case 'export':
      if (g.recordType === 'case-queue') return `Exported the queue to a spreadsheet${plus}`;
      if (g.recordType === 'filing_batch') return "Downloaded a batch's report";
      if (g.recordType === 'access-log') return `Exported the access log${plus}`;
      return `Exported ${g.recordType ?? 'records'}${plus}`;
    case 'view': {
      if (g.route === 'GET /api/cases') return `Looked through the queue (${g.cases} case${g.cases === 1 ? '' : 's'} shown)`;
      if (g.route.startsWith('GET /api/programme')) return `Opened the random review list (${g.cases} case${g.cases === 1 ? '' : 's'})`;
      if (g.recordType === 'filing_batch') return "Read a rejected batch's report";
      if (g.recordType === 'line_item') return `Read amounts of returns for a digit analysis${plus}`;
      if (g.recordType === 'document_request')
        return g.anonymous ? `The taxpayer opened the reply link of ${caseName}` : `Looked at the request of ${caseName}`;
      const parts = [...new Set(g.routes.map((r) => CASE_PARTS.find(([re]) => re.test(r))?.[1]).filter((p): p is string => !!p))];
      if (g.returnRef || parts.length) return `Opened ${caseName}${parts.length ? ` (${parts.join(', ')})` : ''}`;
      return `Looked at ${g.recordType ?? 'a record'}${plus}`;
    }
    case 'change': {
      if (g.recordType === 'case') {
        if (detail === 'claimed') return `Took ${caseName}`;
        if (/^note \S+ added$/.test(detail)) return `Added a note to ${caseName}`;
        const assigned = /^assigned to (.+)$/.exec(detail);
        if (assigned) return `Assigned ${caseName} to ${assigned[1]}`;
        const reopened = /^reopened: .*?; reason: ([\s\S]*)$/.exec(detail);
        if (reopened) return `Reopened ${caseName} (reason: ${reopened[1]})`;
        const moved = /^(\w+) → (\w+)$/.exec(detail);
        if (moved) return `Moved ${caseName} from ${stateText(moved[1])} to ${stateText(moved[2])}`;
        return `Changed ${caseName}${detail ? `: ${detail}` : ''}`;
      }
      if (g.recordType === 'document_request') {
        if (detail.startsWith('reply received')) {
          const files = detail.replace(/^reply received:?\s*/, '');
          return `${g.anonymous ? 'The taxpayer replied' : 'Reply recorded'} on ${caseName}${files ? ` (${files})` : ''}`;
        }
        return `Request on ${caseName}: ${detail}`;
      }
      if (g.recordType === 'letter') return `Letter on ${caseName}${detail ? `: ${detail}` : ''}`;
      if (g.recordType === 'user') {
        const created = /^created (\S+) as (\w+)$/.exec(detail);
        if (created) return `Created the account ${created[1]} (${created[2]})`;
        return `Changed an account: ${detail}`;
      }
      if (g.recordType === 'filing_batch') {
        if (detail.startsWith('batch accepted')) return `Uploaded a batch: accepted (${detail.replace(/^batch accepted:\s*/, '')})`;
        if (detail.startsWith('batch rejected')) return `Uploaded a batch: rejected (${detail.replace(/^batch rejected:\s*/, '')})`;
        if (detail === 'stalled check ended') return 'Ended a stalled batch check';
        return `Batch: ${detail}`;
      }
      if (g.recordType === 'scoring_profile') return `Scoring profile: ${detail}`;
      if (g.recordType === 'saved_view') return `Saved views: ${detail}`;
      return `Changed ${g.recordType ?? 'a record'}${detail ? `: ${detail}` : ''}`;
    }
  }
}

export const AccessLogPageSchema = z.object({
  items: z.array(AccessLogEntrySchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});
export type AccessLogPage = z.infer<typeof AccessLogPageSchema>;

/** Shows only the last three digits of a TIN: "••• ••• 123". */
export function maskTin(tin: string): string {
  const digits = tin.replace(/\D/g, '');
  return `••• ••• ${digits.slice(-3).padStart(3, '•')}`;
}

/**
 * The case-work API contract (docs/design.md#api-contract, issue 7): the queue, one case, the
 * supervisor's workload, and the request bodies beyond those in shared/cases.ts. The server
 * answers in these shapes and the app parses every answer with them.
 *
 * Money is decimal text ("1234.50"), never a float; the risk score is a number with one
 * decimal; priority (risk score × amount at stake) is a ranking figure, given as a number.
 */
import { z } from 'zod';
import { noControlChars } from './text';
import { CASE_STATES, CaseSelectionSchema, CaseStateSchema, FINAL_STATES, type CaseState } from './cases';
import { ACTIVITY_CODES, LINE_CODES } from './returns/line-codes';
import { ScoreBreakdownSchema } from './scoring/breakdown';

/** Queue orders: highest priority, highest score, oldest, and the assessment deadline soonest (issue 13). */
export const CASE_SORTS = ['priority', 'score', 'age', 'deadline'] as const;
export const CaseSortSchema = z.enum(CASE_SORTS);
export type CaseSort = z.infer<typeof CaseSortSchema>;

/** Words for each order on screen. */
export const CASE_SORT_LABELS: Record<CaseSort, string> = { priority: 'Priority', score: 'Risk score', age: 'Oldest first', deadline: 'Deadline soonest' };

/** States still being worked (the queue's default view). */
export const ACTIVE_STATES: readonly CaseState[] = ['open', 'assigned', 'in_review', 'awaiting_reply'];

/**
 * A state filter: one state, a comma-separated list, or a group name: `active` (not yet
 * finished), `finished`, `all`.
 */
export const StateFilterSchema = z
  .string()
  .trim()
  .transform((s, ctx): CaseState[] | undefined => {
    if (s === '' || s === 'all') return undefined;
    if (s === 'active') return [...ACTIVE_STATES];
    if (s === 'finished') return [...FINAL_STATES];
    const parts = s.split(',').map((p) => p.trim());
    const bad = parts.filter((p) => !(CASE_STATES as readonly string[]).includes(p));
    if (bad.length) {
      ctx.addIssue({
        code: 'custom',
        message: `Unknown case state ${bad.map((b) => `"${b}"`).join(', ')}; use ${CASE_STATES.join(', ')}, active, finished or all`,
      });
      return z.NEVER;
    }
    return [...new Set(parts)] as CaseState[];
  });

const uuid = z.uuid();

/**
 * What "Needs me" on an examiner's start screen counts (issue 14), each a queue filter
 * (`needs=`) over the caller's own cases still being worked: a taxpayer's reply they have
 * not opened, a request that ran out with no reply since they last opened the case, an
 * assessment deadline inside {@link NEEDS_DEADLINE_DAYS} days, a case handed to them by
 * someone else that they have not opened yet.
 */
export const NEEDS_KINDS = ['reply', 'expired', 'deadline', 'handed'] as const;
export const NeedsKindSchema = z.enum(NEEDS_KINDS);
export type NeedsKind = z.infer<typeof NeedsKindSchema>;
/** "Deadlines near" means the assessment deadline falls within this many days. */
export const NEEDS_DEADLINE_DAYS = 30;
/** Words for each on screen. */
export const NEEDS_LABELS: Record<NeedsKind, string> = {
  reply: 'Replies received',
  expired: 'Requests expired',
  deadline: `Deadlines within ${NEEDS_DEADLINE_DAYS} days`,
  handed: 'Handed to me',
};
/** Answer of `GET /api/needs-me`: how many of the caller's cases need each. */
export const NeedsMeSchema = z.object({ reply: z.number().int(), expired: z.number().int(), deadline: z.number().int(), handed: z.number().int() });
export type NeedsMe = z.infer<typeof NeedsMeSchema>;

/**
 * Query of `GET /api/cases` and `GET /api/cases/export.xlsx`. `assignee` is an examiner's
 * id, `me` or `none`; `q` is a return reference (prefix, any case), a 9-digit TIN or a part
 * of the taxpayer's name (any case). Leave `state` out to search every state.
 */
export const CaseListQuerySchema = z.object({
  state: StateFilterSchema.optional(),
  assignee: z.union([z.literal('me'), z.literal('none'), uuid], { error: 'Give an examiner id, "me" or "none"' }).optional(),
  batch: uuid.optional(),
  taxYear: z.coerce.number().int().min(1990).max(2100).optional(),
  activity: z.enum(ACTIVITY_CODES).optional(),
  q: z.string().trim().max(64, 'Search by a return reference, a 9-digit TIN or a taxpayer name (at most 64 characters)').check(noControlChars()).optional(),
  /** Only the caller's own cases that need them for this reason (issue 14). */
  needs: NeedsKindSchema.optional(),
  sort: CaseSortSchema.default('priority'),
  /** Only cases whose assessment deadline falls within this many days from today (issue 13). */
  deadlineWithin: z.coerce
    .number({ error: 'Give deadlineWithin as a whole number of days, e.g. 90' })
    .int('Give deadlineWithin as a whole number of days, e.g. 90')
    .min(0, 'deadlineWithin is at least 0')
    .max(3650, 'deadlineWithin is at most 3650 days')
    .optional(),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(100).default(25),
});
/** The parsed query. */
export type CaseListQuery = z.infer<typeof CaseListQuerySchema>;
/** The query as the app builds it (before defaults). */
export type CaseListParams = z.input<typeof CaseListQuerySchema>;

/** One case in the queue. */
export const CaseListItemSchema = z.object({
  id: z.string(),
  returnRef: z.string(),
  taxYear: z.number().int(),
  riskScore: z.number(),
  priority: z.number(),
  /** Estimated tax an adjustment could recover, decimal text. */
  amountAtStake: z.string(),
  state: CaseStateSchema,
  /** Selected by the score, or chosen at random for review (docs/methods.md#programme-outcomes). */
  selection: CaseSelectionSchema,
  /** The examiner's id, or null while open. */
  assignee: z.string().nullable(),
  assigneeName: z.string().nullable(),
  taxpayerName: z.string(),
  /** Last three digits only. */
  maskedTin: z.string(),
  activityCode: z.enum(ACTIVITY_CODES),
  batchId: z.string(),
  openedAt: z.string(),
  dueDate: z.string().nullable(),
  /** Last day the office may assess the return (YYYY-MM-DD), or null when there is no limit (issue 13). */
  assessBy: z.string().nullable(),
  /** Referred or closed: shown as finished where a search reaches past the active states (issue 14). */
  finished: z.boolean(),
  /** A taxpayer's reply arrived and the case's examiner has not opened the case since (issue 14). */
  replyUnread: z.boolean(),
});
export type CaseListItem = z.infer<typeof CaseListItemSchema>;

/** Answer of `GET /api/cases`. */
export const CaseListSchema = z.object({
  items: z.array(CaseListItemSchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});
export type CaseList = z.infer<typeof CaseListSchema>;

/** One line of the return as filed. */
export const CaseLineItemSchema = z.object({
  lineNo: z.number().int(),
  lineCode: z.enum(LINE_CODES),
  amount: z.string(),
});

/** Something that happened to the case, in words, with who did it. */
export const CaseHistoryEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  kind: z.string(),
  actorName: z.string().nullable(),
  fromState: CaseStateSchema.nullable(),
  toState: CaseStateSchema.nullable(),
  /** A sentence: "Reassigned from Ivo Brackley to Nell Quarrender". */
  summary: z.string(),
});
export type CaseHistoryEntry = z.infer<typeof CaseHistoryEntrySchema>;

/** A note on the case (append-only). */
export const CaseNoteSchema = z.object({
  id: z.string(),
  at: z.string(),
  authorId: z.string(),
  authorName: z.string(),
  text: z.string(),
});
export type CaseNoteDto = z.infer<typeof CaseNoteSchema>;

/** A letter kept with the case (full details come from the letters routes). */
export const CaseLetterSummarySchema = z.object({ id: z.string(), kind: z.string(), createdAt: z.string() });

/** A move the caller may make now through `POST /api/cases/:id/transition`. */
export const CaseMoveSchema = z.object({ to: CaseStateSchema, label: z.string() });

/** What the caller may do with the case in its current state. */
export const CaseActionsSchema = z.object({
  /** The caller may act on this case (its examiner, or a supervisor). */
  canAct: z.boolean(),
  claim: z.boolean(),
  /** Give or move the case to an examiner (supervisor, any case not finished: a hand-over keeps the state). */
  assign: z.boolean(),
  transitions: z.array(CaseMoveSchema),
  note: z.boolean(),
  revealTin: z.boolean(),
  /** Reopen the finished case with a reason (supervisor, issue 14). */
  reopen: z.boolean(),
});
export type CaseActions = z.infer<typeof CaseActionsSchema>;

/**
 * One of the taxpayer's other returns on file (issue 14), with the case opened on it if any
 * and how that case ended: a return with no case was not selected.
 */
export const RelatedReturnSchema = z.object({
  returnId: z.string(),
  returnRef: z.string(),
  taxYear: z.number().int(),
  /** A later amended return replaced this one. */
  superseded: z.boolean(),
  caseId: z.string().nullable(),
  state: CaseStateSchema.nullable(),
  outcome: z.string().nullable(),
  adjustedAmount: z.string().nullable(),
  finishedAt: z.string().nullable(),
});
export type RelatedReturn = z.infer<typeof RelatedReturnSchema>;

/** A case on another return the same preparer filed in the same batch (issue 14). */
export const PreparerCaseSchema = z.object({
  caseId: z.string(),
  returnRef: z.string(),
  taxYear: z.number().int(),
  taxpayerName: z.string(),
  state: CaseStateSchema,
  riskScore: z.number(),
});
export type PreparerCase = z.infer<typeof PreparerCaseSchema>;

/** How many of the preparer's other cases in the batch the case screen lists. */
export const PREPARER_CASES_SHOWN = 20;

/** Related cases on the case screen: the taxpayer's other returns, the preparer's other selected returns in the batch. */
export const RelatedCasesSchema = z.object({
  taxpayerReturns: z.array(RelatedReturnSchema),
  /** Null for a self-prepared return. */
  preparer: z
    .object({
      code: z.string(),
      /** Highest priority first, at most {@link PREPARER_CASES_SHOWN}. */
      cases: z.array(PreparerCaseSchema),
      /** All of the preparer's other cases in the batch. */
      total: z.number().int(),
    })
    .nullable(),
});
export type RelatedCases = z.infer<typeof RelatedCasesSchema>;

/** Answer of `GET /api/cases/:id`. */
export const CaseDetailSchema = z.object({
  id: z.string(),
  state: CaseStateSchema,
  /** Selected by the score, or chosen at random for review. */
  selection: CaseSelectionSchema,
  assignee: z.object({ id: z.string(), name: z.string() }).nullable(),
  riskScore: z.number(),
  priority: z.number(),
  amountAtStake: z.string(),
  openedAt: z.string(),
  updatedAt: z.string(),
  closedAt: z.string().nullable(),
  dueDate: z.string().nullable(),
  /** The assessment deadline (issue 13, shared/returns/assessment-deadline.ts), days counted by the office clock. */
  deadline: z.object({
    assessBy: z.string().nullable(),
    basis: z.string(),
    daysLeft: z.number().int().nullable(),
    explanation: z.string(),
    caution: z.string(),
  }),
  outcome: z.string().nullable(),
  adjustedAmount: z.string().nullable(),
  taxpayer: z.object({ id: z.string(), name: z.string(), maskedTin: z.string(), activityCode: z.enum(ACTIVITY_CODES) }),
  return: z.object({
    id: z.string(),
    returnRef: z.string(),
    taxYear: z.number().int(),
    batchId: z.string(),
    preparerCode: z.string().nullable(),
    /** Aldermere's rules applied to the lines, and what the return itself reported (null when absent). */
    totals: z.object({
      wages: z.string(),
      interest: z.string(),
      receipts: z.string(),
      businessExpenses: z.string(),
      income: z.string(),
      reportedIncome: z.string().nullable(),
      deductions: z.string(),
      reportedDeductions: z.string().nullable(),
      taxable: z.string(),
      tax: z.string(),
      withheld: z.string(),
      refund: z.string(),
      reportedRefund: z.string().nullable(),
    }),
  }),
  lineItems: z.array(CaseLineItemSchema),
  score: z.object({ profileVersion: z.number().int(), scoredAt: z.string(), breakdown: ScoreBreakdownSchema }),
  history: z.array(CaseHistoryEntrySchema),
  notes: z.array(CaseNoteSchema),
  letters: z.array(CaseLetterSummarySchema),
  actions: CaseActionsSchema,
  /** The taxpayer's other returns and the preparer's other cases in the batch (issue 14). */
  related: RelatedCasesSchema.optional(),
  /**
   * A taxpayer's reply the case's examiner had not opened before this read (issue 14): when it
   * arrived, or null. The examiner's own read clears it, so their next read says null.
   */
  replyUnreadSince: z.string().nullable().optional(),
});
export type CaseDetail = z.infer<typeof CaseDetailSchema>;

/** Answer of the case-changing routes: the case's state and assignee afterwards. */
export const CaseChangedSchema = z.object({ id: z.string(), state: CaseStateSchema, assignee: z.string().nullable() });
export type CaseChanged = z.infer<typeof CaseChangedSchema>;

/** Answer of `POST /api/cases/:id/reveal-tin` (logged as 'reveal-tin'). */
export const RevealedTinSchema = z.object({ tin: z.string().regex(/^\d{9}$/) });

/** Body of `POST /api/cases/reassign` (supervisor): a selection of cases to one examiner. */
export const BulkReassignSchema = z.object({
  caseIds: z.array(uuid).min(1, 'Choose at least one case').max(200, 'Reassign at most 200 cases at a time'),
  assigneeId: z.uuid('Choose an examiner'),
});
export type BulkReassign = z.infer<typeof BulkReassignSchema>;

/** Answer of the bulk reassignment: what moved and what was refused, with the reason. */
export const BulkReassignResultSchema = z.object({
  moved: z.array(z.string()),
  refused: z.array(z.object({ id: z.string(), reason: z.string() })),
});
export type BulkReassignResult = z.infer<typeof BulkReassignResultSchema>;

/** An examiner one can assign cases to. */
export const ExaminerSchema = z.object({ id: z.string(), username: z.string(), displayName: z.string() });
export const ExaminerListSchema = z.object({ items: z.array(ExaminerSchema) });
export type Examiner = z.infer<typeof ExaminerSchema>;

/** One examiner's load (supervisor's workload screen). */
export const WorkloadRowSchema = z.object({
  examinerId: z.string(),
  username: z.string(),
  displayName: z.string(),
  /** Given to them, not yet started. */
  assigned: z.number().int(),
  inReview: z.number().int(),
  awaitingReply: z.number().int(),
  /** Still being worked and past the due date. */
  overdue: z.number().int(),
  /** assigned + inReview + awaitingReply. */
  open: z.number().int(),
  /** Finished (referred or closed) in the last 30 days. */
  finished30d: z.number().int(),
  /** Still being worked and the assessment deadline within 90 days (issue 13). */
  deadlinesNear: z.number().int(),
});
export type WorkloadRow = z.infer<typeof WorkloadRowSchema>;

/** Answer of `GET /api/workload`. */
export const WorkloadSchema = z.object({
  examiners: z.array(WorkloadRowSchema),
  /** Open cases nobody holds yet. */
  unassigned: z.number().int(),
  /** The date overdue is measured against (the server's today, YYYY-MM-DD). */
  asOf: z.string(),
});
export type Workload = z.infer<typeof WorkloadSchema>;

/**
 * Moves that `POST /api/cases/:id/transition` does not make, because another action makes
 * them with what they need: a case is taken by claiming it or given by a supervisor; it
 * waits for a reply because a document request was sent; it is referred with its memo.
 * The text is the 409 message the transition route answers.
 */
export const MOVES_ELSEWHERE: Partial<Record<CaseState, string>> = {
  assigned: 'A case becomes assigned when an examiner claims it (POST /api/cases/:id/claim) or a supervisor assigns it (POST /api/cases/:id/assign).',
  awaiting_reply: 'A case waits for a reply once a document request is sent: use "Request documents" (POST /api/cases/:id/document-requests).',
  referred: 'A case is referred by writing its referral memo: use "Refer the case" (POST /api/cases/:id/referral).',
};

/** The words on the button that makes a move. */
export function moveLabel(from: CaseState, to: CaseState): string {
  switch (to) {
    case 'in_review':
      return from === 'awaiting_reply' ? 'Back to review' : 'Start the review';
    case 'open':
      return 'Release to the queue';
    case 'closed_no_change':
      return 'Close: no change';
    case 'closed_adjusted':
      return 'Close: adjusted';
    case 'assigned':
      return 'Assign';
    case 'awaiting_reply':
      return 'Request documents';
    case 'referred':
      return 'Refer';
  }
}

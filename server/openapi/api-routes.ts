/**
 * Every API route with the shared zod schemas of its request and its answers: the one list
 * the OpenAPI document (server/openapi/openapi-document.ts) is built from.
 *
 * Adding a route to a router without adding it here fails tests/api/openapi.test.ts, which
 * walks the app's registered routes; answers of the main routes are checked against the
 * document there too. Who may call a route is not restated here: the route's own access rule
 * decides (shared/permissions.ts), and the document only says whether a session is needed.
 */
import { z } from 'zod';
import {
  DigitAnalysisRequestSchema,
  PoolAnalysisRequestSchema,
  PoolAnalysisSchema,
  PoolChoicesSchema,
  ReconciliationRequestSchema,
  ReconciliationSchema,
  SaveAnalysisRequestSchema,
  SavedAnalysisListSchema,
  SavedAnalysisSchema,
} from '../../shared/analyses';
import { AccessLogExportQuerySchema, AccessLogPageSchema, AccessLogQuerySchema } from '../../shared/access-log';
import { LoginRequestSchema, SessionResponseSchema } from '../../shared/auth';
import {
  BulkReassignResultSchema,
  BulkReassignSchema,
  CaseChangedSchema,
  CaseDetailSchema,
  CaseListQuerySchema,
  CaseListSchema,
  CaseNoteSchema,
  ExaminerListSchema,
  NeedsMeSchema,
  RevealedTinSchema,
  WorkloadSchema,
} from '../../shared/case-api';
import { AssignRequestSchema, NoteRequestSchema, ReopenRequestSchema, TransitionRequestSchema } from '../../shared/cases';
import { digitProfileSchema } from '../../shared/digits/schema';
import { ControlsQuerySchema, ControlsSchema, OutcomesQuerySchema, OutcomesSchema, PreviewRequestSchema, PreviewSchema } from '../../shared/programme/api';
import { HealthResponseSchema } from '../../shared/health';
import { HousekeepingResultSchema } from '../../shared/housekeeping';
import { SavedViewCreateSchema, SavedViewListSchema, SavedViewSchema } from '../../shared/saved-views';
import {
  DocumentRequestInputSchema,
  LetterContextSchema,
  LetterPreviewSchema,
  LetterCreatedSchema,
  LetterListSchema,
  REPLY_FILE_TYPES,
  REPLY_FILE_WORDS,
  REPLY_MAX_FILES,
  ReferralInputSchema,
  ReplyClosedSchema,
  ReplyReceiptSchema,
  ReplyRequestSchema,
} from '../../shared/letters';
import {
  BatchCreatedSchema,
  BatchDetailSchema,
  BatchDuplicateSchema,
  BatchListQuerySchema,
  BatchListSchema,
  BatchRejectedSchema,
} from '../../shared/returns/batch-rows';
import { NewProfileSchema, PerformanceSchema, ProfileListSchema, ProfileVersionSchema, RescoreSchema } from '../../shared/scoring/profile-api';
import { CreateUserSchema, ResetPasswordSchema, UpdateUserSchema, UserListSchema, UserSchema } from '../../shared/users';

/**
 * The body of every error answer (server/http/errors.ts; server/http/validate.ts adds
 * `issues` for a 422). Some routes add fields of their own, so other fields are allowed.
 */
export const ApiErrorSchema = z.looseObject({
  error: z.string(),
  issues: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
});

/** Answer of `POST /api/batches/:id/rescore`: the profile version the batch is re-scored under. */
export const RescoreAcceptedSchema = z.object({ version: z.number().int() });

/**
 * Answer schemas by the name they carry in the document's components. Every JSON answer of a
 * route must be one of these (the document builder refuses others), so each shape has a name
 * a client generator can use.
 */
export const COMPONENTS = {
  ApiError: ApiErrorSchema,
  SessionResponse: SessionResponseSchema,
  HealthResponse: HealthResponseSchema,
  User: UserSchema,
  UserList: UserListSchema,
  AccessLogPage: AccessLogPageSchema,
  DigitProfile: digitProfileSchema,
  SavedAnalysis: SavedAnalysisSchema,
  SavedAnalysisList: SavedAnalysisListSchema,
  PoolAnalysis: PoolAnalysisSchema,
  PoolChoices: PoolChoicesSchema,
  Reconciliation: ReconciliationSchema,
  ProfileVersion: ProfileVersionSchema,
  ProfileList: ProfileListSchema,
  Performance: PerformanceSchema,
  RescoreAccepted: RescoreAcceptedSchema,
  BatchCreated: BatchCreatedSchema,
  BatchRejected: BatchRejectedSchema,
  BatchDuplicate: BatchDuplicateSchema,
  BatchList: BatchListSchema,
  BatchDetail: BatchDetailSchema,
  CaseList: CaseListSchema,
  CaseDetail: CaseDetailSchema,
  CaseChanged: CaseChangedSchema,
  CaseNote: CaseNoteSchema,
  RevealedTin: RevealedTinSchema,
  BulkReassignResult: BulkReassignResultSchema,
  ExaminerList: ExaminerListSchema,
  Workload: WorkloadSchema,
  NeedsMe: NeedsMeSchema,
  SavedView: SavedViewSchema,
  SavedViewList: SavedViewListSchema,
  HousekeepingResult: HousekeepingResultSchema,
  ProgrammeOutcomes: OutcomesSchema,
  RandomReviewCases: ControlsSchema,
  ScoringPreview: PreviewSchema,
  LetterCreated: LetterCreatedSchema,
  LetterList: LetterListSchema,
  LetterContext: LetterContextSchema,
  LetterPreview: LetterPreviewSchema,
  ReplyRequest: ReplyRequestSchema,
  ReplyClosed: ReplyClosedSchema,
  ReplyReceipt: ReplyReceiptSchema,
} satisfies Record<string, z.ZodType>;

/** What an answer carries. */
export type ApiBody =
  /** JSON in the shape of a shared schema (one of {@link COMPONENTS}). */
  | { json: z.ZodType }
  /** A file: its media types. */
  | { file: readonly string[] }
  /** Any JSON object (the OpenAPI document itself). */
  | { anyJson: true }
  /** No body (204). */
  | { empty: true };

/** One answer of a route. */
export interface ApiResponse {
  description: string;
  body: ApiBody;
}

/** A multipart upload: its parts, each a file or a text field. */
export interface MultipartBody {
  parts: Record<string, { kind: 'file' | 'files' | 'text'; description: string; required?: boolean; mediaTypes?: readonly string[] }>;
}

/** One route. */
export interface ApiRoute {
  method: 'get' | 'post' | 'patch' | 'put' | 'delete';
  /** The full path as Express registers it (`/api/cases/:id`). */
  path: string;
  operationId: string;
  /** The group it is listed under. */
  tag: 'session' | 'status' | 'users' | 'access log' | 'analyses' | 'scoring' | 'batches' | 'cases' | 'programme' | 'letters' | 'replies' | 'api';
  summary: string;
  description?: string;
  /** Open without a session (the route's rule is `publicAccess`). */
  public?: boolean;
  /** The query string, validated by this schema (its input form). */
  query?: z.ZodType;
  /** A JSON body, validated by this schema (its input form). */
  body?: z.ZodType;
  /** A multipart body (as well as, or instead of, a JSON body). */
  multipart?: MultipartBody;
  /** Answers by status. 401/403 (routes with a session), 422 (routes with input) and 500 are added. */
  responses: Record<number, ApiResponse>;
}

const XLSX = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';
const json = (schema: z.ZodType, description: string): ApiResponse => ({ description, body: { json: schema } });
const error = (description: string): ApiResponse => json(ApiErrorSchema, description);
const file = (mediaTypes: readonly string[], description: string): ApiResponse => ({ description, body: { file: mediaTypes } });
const empty = (description: string): ApiResponse => ({ description, body: { empty: true } });
const noCase = error('No such case (or an id that is not a case id).');

/** Every route of the API, grouped as the routers are. */
export const API_ROUTES: readonly ApiRoute[] = [
  // server/openapi/openapi.routes.ts
  {
    method: 'get',
    path: '/api/openapi.json',
    operationId: 'getOpenApiDocument',
    tag: 'api',
    public: true,
    summary: 'This document',
    description: 'The OpenAPI 3.1 description of the API. It describes the routes and holds no data, so it is open.',
    responses: { 200: { description: 'The document.', body: { anyJson: true } } },
  },

  // server/health/health.routes.ts
  {
    method: 'get',
    path: '/api/health',
    operationId: 'getHealth',
    tag: 'status',
    public: true,
    summary: 'Health of the database, job queue and mail',
    responses: { 200: json(HealthResponseSchema, 'Everything is up.'), 503: json(HealthResponseSchema, 'Something is down; each check says why.') },
  },

  // server/auth/auth.routes.ts
  {
    method: 'post',
    path: '/api/auth/login',
    operationId: 'signIn',
    tag: 'session',
    public: true,
    summary: 'Sign in',
    description: 'Starts a session (cookie) and answers the CSRF token that every later state-changing request sends in the X-CSRF-Token header.',
    body: LoginRequestSchema,
    responses: {
      200: json(SessionResponseSchema, 'Signed in.'),
      401: error('Wrong user name or password, or the account is deactivated.'),
      429: error('Too many failed sign-ins; the Retry-After header says when to try again.'),
    },
  },
  {
    method: 'post',
    path: '/api/auth/logout',
    operationId: 'signOut',
    tag: 'session',
    summary: 'Sign out',
    responses: { 204: empty('Signed out; the session is gone.') },
  },
  {
    method: 'get',
    path: '/api/auth/me',
    operationId: 'getSession',
    tag: 'session',
    summary: 'The signed-in user and the CSRF token',
    responses: { 200: json(SessionResponseSchema, 'The session.') },
  },

  // server/users/user.routes.ts
  {
    method: 'get',
    path: '/api/users',
    operationId: 'listUsers',
    tag: 'users',
    summary: 'Staff accounts',
    responses: { 200: json(UserListSchema, 'Every account.') },
  },
  {
    method: 'post',
    path: '/api/users',
    operationId: 'createUser',
    tag: 'users',
    summary: 'Create an account',
    body: CreateUserSchema,
    responses: { 201: json(UserSchema, 'The new account.'), 409: error('The user name is taken.') },
  },
  {
    method: 'patch',
    path: '/api/users/:id',
    operationId: 'updateUser',
    tag: 'users',
    summary: 'Change an account’s name, role or active flag',
    body: UpdateUserSchema,
    responses: {
      200: json(UserSchema, 'The account afterwards.'),
      404: error('No such user.'),
      409: error('An administrator may not deactivate themselves or drop their own role.'),
    },
  },
  {
    method: 'post',
    path: '/api/users/:id/password',
    operationId: 'resetPassword',
    tag: 'users',
    summary: 'Set a new password',
    body: ResetPasswordSchema,
    responses: { 204: empty('Changed.'), 404: error('No such user.') },
  },
  {
    method: 'post',
    path: '/api/users/:id/unlock',
    operationId: 'unlockUser',
    tag: 'users',
    summary: 'Let an account locked by failed sign-ins sign in again at once',
    description: 'Idempotent: an account that is not locked is answered as it is, and nothing is logged.',
    responses: { 200: json(UserSchema, 'The account afterwards.'), 404: error('No such user.') },
  },

  // server/access-log/access-log.routes.ts
  {
    method: 'get',
    path: '/api/access-log',
    operationId: 'listAccessLog',
    tag: 'access log',
    summary: 'Who viewed or changed which taxpayer’s data, newest first',
    query: AccessLogQuerySchema,
    responses: { 200: json(AccessLogPageSchema, 'One page of the log: one row per thing a person did, in plain words.') },
  },
  {
    method: 'get',
    path: '/api/access-log/export.xlsx',
    operationId: 'exportAccessLog',
    tag: 'access log',
    summary: 'The filtered log as a workbook (the export is itself logged)',
    query: AccessLogExportQuerySchema,
    responses: { 200: file([XLSX], 'The workbook: one row per thing a person did, newest first.') },
  },

  // server/analyses/analyses.routes.ts
  {
    method: 'post',
    path: '/api/analyses/digits',
    operationId: 'analyseDigits',
    tag: 'analyses',
    summary: 'Digit analysis of a set of amounts',
    description: 'Send the amounts as JSON, or a .txt, .csv or .xlsx file as multipart.',
    body: DigitAnalysisRequestSchema,
    multipart: {
      parts: {
        file: { kind: 'file', required: true, description: 'The amounts: a .txt file (one a line), or a .csv or .xlsx file with an amount column.' },
        column: { kind: 'text', description: 'The column that holds the amounts, when the file has several.' },
      },
    },
    responses: { 200: json(digitProfileSchema, 'The digit profile.'), 413: error('The file is over the size or reading limit.') },
  },
  {
    method: 'post',
    path: '/api/analyses/digits/pool',
    operationId: 'analysePool',
    tag: 'analyses',
    summary: "Digit analysis of a pool of the returns on file: one preparer's returns, one line code in a batch or tax year, one taxpayer's years",
    description: 'Kept nowhere; the read of the amounts is in the access log.',
    body: PoolAnalysisRequestSchema,
    responses: {
      200: json(PoolAnalysisSchema, 'The pool in words with its count of amounts, and the result.'),
      404: error('No such preparer, batch or taxpayer.'),
      413: error('The pool holds more amounts than one analysis reads; the message says how to narrow it.'),
    },
  },
  {
    method: 'get',
    path: '/api/analyses/pools',
    operationId: 'listPoolChoices',
    tag: 'analyses',
    summary: 'What the pool pickers offer: preparers, batches with their tax years, and the tax years on file',
    responses: { 200: json(PoolChoicesSchema, 'The choices.') },
  },

  // server/analyses/case-analyses.routes.ts
  {
    method: 'post',
    path: '/api/cases/:id/analyses',
    operationId: 'saveCaseAnalysis',
    tag: 'analyses',
    summary: "Run a digit analysis of a reply file's column, or of a pool of the returns on file, and keep it with the case (never changed afterwards)",
    body: SaveAnalysisRequestSchema,
    responses: {
      201: json(SavedAnalysisSchema, 'The saved working paper; result is the JSON of npm run digits -- --json.'),
      404: error('No such case, reply file, preparer, batch or taxpayer.'),
      413: error('The pool holds more amounts than one analysis reads.'),
    },
  },
  {
    method: 'get',
    path: '/api/cases/:id/analyses',
    operationId: 'listCaseAnalyses',
    tag: 'analyses',
    summary: 'The digit analyses kept with a case, oldest first',
    responses: { 200: json(SavedAnalysisListSchema, 'The working papers.') },
  },
  {
    method: 'get',
    path: '/api/cases/:id/analyses/:analysisId/pdf',
    operationId: 'getCaseAnalysisPdf',
    tag: 'analyses',
    summary: 'A saved digit analysis as a PDF working paper',
    responses: { 200: file(['application/pdf'], 'The PDF.'), 404: error('No such analysis on this case.') },
  },
  {
    method: 'get',
    path: '/api/cases/:id/analyses/:analysisId/xlsx',
    operationId: 'getCaseAnalysisXlsx',
    tag: 'analyses',
    summary: 'A saved digit analysis as an XLSX working paper: a cover sheet and one sheet per test',
    responses: { 200: file([XLSX], 'The workbook.'), 404: error('No such analysis on this case.') },
  },
  {
    method: 'post',
    path: '/api/cases/:id/reconciliation',
    operationId: 'reconcileLedger',
    tag: 'analyses',
    summary: "A received ledger's totals per category, mapped to line codes, beside the amounts the return reports",
    body: ReconciliationRequestSchema,
    responses: {
      200: json(ReconciliationSchema, 'One row per mapped line code with the difference; unmapped categories apart.'),
      404: error('No such case or reply file.'),
    },
  },

  // server/scoring/scoring-profile.routes.ts
  {
    method: 'get',
    path: '/api/scoring/profiles',
    operationId: 'listScoringProfiles',
    tag: 'scoring',
    summary: 'Scoring profile versions, newest first',
    responses: { 200: json(ProfileListSchema, 'Every version.') },
  },
  {
    method: 'post',
    path: '/api/scoring/profiles',
    operationId: 'addScoringProfile',
    tag: 'scoring',
    summary: 'Add a scoring profile version (and activate it unless told not to)',
    body: NewProfileSchema,
    responses: { 201: json(ProfileVersionSchema, 'The new version.') },
  },
  {
    method: 'post',
    path: '/api/scoring/profiles/:version/activate',
    operationId: 'activateScoringProfile',
    tag: 'scoring',
    summary: 'Make a version the one new batches are scored under',
    responses: { 204: empty('Activated.'), 404: error('No such version.') },
  },
  {
    method: 'get',
    path: '/api/scoring/performance',
    operationId: 'getFactorPerformance',
    tag: 'scoring',
    summary: 'How often each factor’s closed cases were adjusted, with suggested weights',
    responses: { 200: json(PerformanceSchema, 'The performance of the active version.') },
  },
  {
    method: 'post',
    path: '/api/scoring/preview',
    operationId: 'previewScoringProfile',
    tag: 'scoring',
    summary: 'What a profile would select in a scored batch (stay, leave, join, expected yield); saves nothing',
    body: PreviewRequestSchema,
    responses: { 200: json(PreviewSchema, 'The preview.'), 404: error('No such batch.'), 409: error('The batch has no finished scoring.') },
  },
  {
    method: 'post',
    path: '/api/batches/:id/rescore',
    operationId: 'rescoreBatch',
    tag: 'scoring',
    summary: 'Score a batch again under a profile version',
    body: RescoreSchema,
    responses: {
      202: json(RescoreAcceptedSchema, 'Queued.'),
      404: error('No such batch or version.'),
      409: error('The batch is not scored yet, or was already scored under that version.'),
    },
  },

  // server/batches/batch.routes.ts
  {
    method: 'post',
    path: '/api/batches',
    operationId: 'uploadBatch',
    tag: 'batches',
    summary: 'Load a batch of filed returns',
    description:
      'One XLSX workbook as `file`, or the CSV files as `returns`, `line_items` and optionally `statements`. A batch with any error is refused whole.',
    multipart: {
      parts: {
        file: { kind: 'file', description: 'One .xlsx workbook with the sheets returns, line_items and (optionally) statements.', mediaTypes: [XLSX] },
        returns: { kind: 'file', description: 'returns.csv', mediaTypes: ['text/csv'] },
        line_items: { kind: 'file', description: 'line_items.csv', mediaTypes: ['text/csv'] },
        statements: { kind: 'file', description: 'statements.csv (optional)', mediaTypes: ['text/csv'] },
        label: { kind: 'text', description: 'What people call the batch (optional, up to 80 characters); blank: "Batch N · date · source".' },
      },
    },
    responses: {
      201: json(BatchCreatedSchema, 'Stored and queued for scoring.'),
      409: json(BatchDuplicateSchema, 'The same file was loaded before.'),
      413: json(BatchRejectedSchema, 'A file is over the size limit.'),
      422: json(BatchRejectedSchema, 'Refused whole: every problem with its file, row and column.'),
    },
  },
  {
    method: 'get',
    path: '/api/batches',
    operationId: 'listBatches',
    tag: 'batches',
    summary: 'Batches, newest first',
    query: BatchListQuerySchema,
    responses: { 200: json(BatchListSchema, 'One page of batches.') },
  },
  {
    method: 'get',
    path: '/api/batches/:id',
    operationId: 'getBatch',
    tag: 'batches',
    summary: 'A batch with its validation report',
    responses: { 200: json(BatchDetailSchema, 'The batch.'), 404: error('No such batch.') },
  },
  {
    method: 'get',
    path: '/api/batches/:id/report.xlsx',
    operationId: 'getBatchReport',
    tag: 'batches',
    summary: "The batch's report as a workbook (errors, notices, and what scoring made of it)",
    responses: { 200: file([XLSX], 'The workbook.'), 404: error('No such batch.') },
  },
  {
    method: 'post',
    path: '/api/batches/:id/retry',
    operationId: 'endStalledBatch',
    tag: 'batches',
    summary: 'End a batch whose check has stalled, so its file can be uploaded again',
    description: 'Idempotent: a batch already ended so is answered as it stands. Nothing of the batch is stored.',
    responses: {
      200: json(BatchDetailSchema, 'The batch, ended (rejected with the reason); upload the same file again.'),
      404: error('No such batch.'),
      409: error('The batch is still making progress, or is not being checked.'),
    },
  },

  // server/cases/case.routes.ts
  {
    method: 'get',
    path: '/api/cases',
    operationId: 'listCases',
    tag: 'cases',
    summary: 'The examination queue',
    query: CaseListQuerySchema,
    responses: { 200: json(CaseListSchema, 'One page of cases.') },
  },
  {
    method: 'get',
    path: '/api/cases/export.xlsx',
    operationId: 'exportCases',
    tag: 'cases',
    summary: 'The queue, filtered as for the list, as a workbook',
    query: CaseListQuerySchema,
    responses: { 200: file([XLSX], 'The workbook (streamed).') },
  },
  {
    method: 'post',
    path: '/api/cases/reassign',
    operationId: 'reassignCases',
    tag: 'cases',
    summary: 'Give a selection of cases to one examiner',
    body: BulkReassignSchema,
    responses: { 200: json(BulkReassignResultSchema, 'What moved and what was refused, with the reason.') },
  },
  {
    method: 'get',
    path: '/api/examiners',
    operationId: 'listExaminers',
    tag: 'cases',
    summary: 'Examiners one can give cases to',
    responses: { 200: json(ExaminerListSchema, 'Active examiners.') },
  },
  {
    method: 'get',
    path: '/api/cases/:id',
    operationId: 'getCase',
    tag: 'cases',
    summary: 'One case: the return, its score breakdown, history, notes and what the caller may do',
    responses: { 200: json(CaseDetailSchema, 'The case.'), 404: noCase },
  },
  {
    method: 'post',
    path: '/api/cases/:id/claim',
    operationId: 'claimCase',
    tag: 'cases',
    summary: 'Take an open case',
    responses: { 200: json(CaseChangedSchema, 'The case is the caller’s.'), 404: noCase, 409: error('The case is not open any more.') },
  },
  {
    method: 'post',
    path: '/api/cases/:id/assign',
    operationId: 'assignCase',
    tag: 'cases',
    summary: 'Give or move a case to an examiner',
    body: AssignRequestSchema,
    responses: { 200: json(CaseChangedSchema, 'The case afterwards.'), 404: noCase, 409: error('The case cannot be assigned in its state.') },
  },
  {
    method: 'post',
    path: '/api/cases/:id/reopen',
    operationId: 'reopenCase',
    tag: 'cases',
    summary: 'Reopen a finished case with a reason (supervisor)',
    body: ReopenRequestSchema,
    responses: { 200: json(CaseChangedSchema, 'The case afterwards: back in review.'), 404: noCase, 409: error('The case is not finished.') },
  },
  {
    method: 'post',
    path: '/api/cases/:id/transition',
    operationId: 'moveCase',
    tag: 'cases',
    summary: 'Move a case to another state',
    body: TransitionRequestSchema,
    responses: { 200: json(CaseChangedSchema, 'The case afterwards.'), 404: noCase, 409: error('The move is not allowed from the case’s state.') },
  },
  {
    method: 'post',
    path: '/api/cases/:id/notes',
    operationId: 'addCaseNote',
    tag: 'cases',
    summary: 'Add a note (notes are never edited)',
    body: NoteRequestSchema,
    responses: { 201: json(CaseNoteSchema, 'The note.'), 404: noCase },
  },
  {
    method: 'post',
    path: '/api/cases/:id/reveal-tin',
    operationId: 'revealTin',
    tag: 'cases',
    summary: 'The full TIN of the case’s taxpayer (written to the access log)',
    responses: { 200: json(RevealedTinSchema, 'The TIN.'), 404: noCase },
  },

  // server/cases/case-queue.routes.ts
  {
    method: 'get',
    path: '/api/needs-me',
    operationId: 'getNeedsMe',
    tag: 'cases',
    summary: 'How many of the caller’s own cases need them: replies received, requests expired, deadlines near, handed to them',
    responses: { 200: json(NeedsMeSchema, 'The counts by reason.') },
  },

  // server/saved-views/saved-views.routes.ts
  {
    method: 'get',
    path: '/api/saved-views',
    operationId: 'listSavedViews',
    tag: 'cases',
    summary: 'The caller’s saved views of the queue, oldest first',
    responses: { 200: json(SavedViewListSchema, 'The views.') },
  },
  {
    method: 'post',
    path: '/api/saved-views',
    operationId: 'createSavedView',
    tag: 'cases',
    summary: 'Keep the queue’s filters and order under a name',
    body: SavedViewCreateSchema,
    responses: {
      201: json(SavedViewSchema, 'The view as kept.'),
      409: error('The caller already has a view of that name.'),
    },
  },
  {
    method: 'delete',
    path: '/api/saved-views/:id',
    operationId: 'deleteSavedView',
    tag: 'cases',
    summary: 'Delete one of the caller’s saved views',
    responses: { 204: empty('Deleted.'), 404: error('The caller has no view with this id.') },
  },

  // server/cases/workload.routes.ts
  {
    method: 'get',
    path: '/api/workload',
    operationId: 'getWorkload',
    tag: 'cases',
    summary: 'Each examiner’s open, overdue and recently finished cases',
    responses: { 200: json(WorkloadSchema, 'The workload.') },
  },

  // server/housekeeping/housekeeping.routes.ts
  {
    method: 'post',
    path: '/api/housekeeping/run',
    operationId: 'runHousekeeping',
    tag: 'cases',
    summary: 'Run the daily pass now: expire late requests, send reminders and examiners’ digests (a second run the same day does nothing new)',
    responses: { 200: json(HousekeepingResultSchema, 'What this run did.') },
  },

  // server/programme/programme.routes.ts
  {
    method: 'get',
    path: '/api/programme/outcomes',
    operationId: 'getProgrammeOutcomes',
    tag: 'programme',
    summary: 'Adjustment rates and amounts of selected and random-review cases, with 95 % intervals and the lift',
    query: OutcomesQuerySchema,
    responses: { 200: json(OutcomesSchema, 'The figures.') },
  },
  {
    method: 'get',
    path: '/api/programme/controls',
    operationId: 'listRandomReviewCases',
    tag: 'programme',
    summary: 'A batch’s cases chosen at random for review',
    query: ControlsQuerySchema,
    responses: { 200: json(ControlsSchema, 'The random review cases.') },
  },

  // server/letters/letters.routes.ts
  {
    method: 'post',
    path: '/api/cases/:id/document-requests',
    operationId: 'sendDocumentRequest',
    tag: 'letters',
    summary: 'Ask the taxpayer for records, by mail with a one-time reply link',
    body: DocumentRequestInputSchema,
    responses: {
      201: json(LetterCreatedSchema, 'Sent; the case awaits the reply.'),
      404: noCase,
      409: error('The case is not in review.'),
      502: error('The mail server refused the letter; nothing was stored.'),
    },
  },
  {
    method: 'get',
    path: '/api/cases/:id/letter-context',
    operationId: 'getLetterContext',
    tag: 'letters',
    summary: 'What the request form needs: the office’s today, the due-date window and the e-mail address on file',
    responses: { 200: json(LetterContextSchema, 'The context.'), 404: noCase },
  },
  {
    method: 'post',
    path: '/api/cases/:id/document-requests/preview',
    operationId: 'previewDocumentRequest',
    tag: 'letters',
    summary: 'The document request as it would be sent (nothing stored or sent)',
    body: DocumentRequestInputSchema,
    responses: {
      200: json(LetterPreviewSchema, 'The letter’s address, subject and text.'),
      404: noCase,
      409: error('The case is not in review.'),
      422: error('Invalid input or no usable address.'),
    },
  },
  {
    method: 'post',
    path: '/api/cases/:id/referral/preview',
    operationId: 'previewReferralMemo',
    tag: 'letters',
    summary: 'The referral memo a referral would write, as text (nothing stored, the case does not move)',
    body: ReferralInputSchema,
    responses: {
      200: json(LetterPreviewSchema, 'The memo’s subject and text (to: null, it stays in the office).'),
      404: noCase,
      409: error('The case cannot be referred from its state.'),
    },
  },
  {
    method: 'post',
    path: '/api/cases/:id/closing-letter/preview',
    operationId: 'previewClosingLetter',
    tag: 'letters',
    summary: 'The no-change letter or adjustment proposal a closing would send (nothing stored or sent)',
    body: TransitionRequestSchema,
    responses: {
      200: json(LetterPreviewSchema, 'The letter’s address (null: kept for post), subject and text.'),
      404: noCase,
      409: error('The case cannot close from its state.'),
      422: error('Invalid input, or corrections that change no tax.'),
    },
  },
  {
    method: 'post',
    path: '/api/cases/:id/referral',
    operationId: 'referCase',
    tag: 'letters',
    summary: 'Refer a case to a unit with a memo',
    body: ReferralInputSchema,
    responses: { 201: json(LetterCreatedSchema, 'The memo; the case is referred.'), 404: noCase, 409: error('The case cannot be referred in its state.') },
  },
  {
    method: 'get',
    path: '/api/cases/:id/letters',
    operationId: 'listLetters',
    tag: 'letters',
    summary: 'The case’s letters, newest first',
    responses: { 200: json(LetterListSchema, 'The letters.'), 404: noCase },
  },
  {
    method: 'get',
    path: '/api/cases/:id/letters/:letterId/pdf',
    operationId: 'getLetterPdf',
    tag: 'letters',
    summary: 'The office copy of a letter',
    responses: { 200: file(['application/pdf'], 'The PDF.'), 404: error('No such letter on this case.') },
  },
  {
    method: 'get',
    path: '/api/cases/:id/reply-uploads/:uploadId',
    operationId: 'getReplyUpload',
    tag: 'letters',
    summary: 'A file the taxpayer sent (always as a download)',
    responses: { 200: file(REPLY_FILE_TYPES, 'The file as received.'), 404: error('No such file on this case.') },
  },

  // server/letters/replies.routes.ts
  {
    method: 'get',
    path: '/api/replies/:token',
    operationId: 'getReplyRequest',
    tag: 'replies',
    public: true,
    summary: 'What a one-time reply link asks for',
    description: 'The token in the path is the key; no account is needed.',
    responses: {
      200: json(ReplyRequestSchema, 'The request is open.'),
      404: error('Unknown link.'),
      410: json(ReplyClosedSchema, 'The link was used or has expired.'),
    },
  },
  {
    method: 'post',
    path: '/api/replies/:token',
    operationId: 'sendReply',
    tag: 'replies',
    public: true,
    summary: 'Send records asked for: in one go or in parts until the due date or "complete"',
    multipart: {
      parts: {
        files: {
          kind: 'files',
          description: `Up to ${REPLY_MAX_FILES} ${REPLY_FILE_WORDS} files (none only with complete=true after an earlier send).`,
          mediaTypes: REPLY_FILE_TYPES,
        },
        complete: { kind: 'text', description: '"true" when this is everything: the link closes and the case goes back to review.' },
      },
    },
    responses: {
      201: json(ReplyReceiptSchema, 'Received.'),
      404: error('Unknown link.'),
      410: json(ReplyClosedSchema, 'The link was used or has expired.'),
      413: error('A file, or all together, is over the size limit.'),
    },
  },
];

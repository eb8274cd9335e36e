/**
 * Examination cases (docs/design.md#case-states): states and the moves between them.
 * open → assigned → in_review → awaiting_reply → (referred | closed_no_change | closed_adjusted)
 */
import { z } from 'zod';
import { CorrectionListSchema } from './returns/corrections';
import { noControlChars } from './text';

export const CASE_STATES = ['open', 'assigned', 'in_review', 'awaiting_reply', 'referred', 'closed_no_change', 'closed_adjusted'] as const;
export const CaseStateSchema = z.enum(CASE_STATES);
export type CaseState = z.infer<typeof CaseStateSchema>;

/** Words for each state on screen. */
export const CASE_STATE_LABELS: Record<CaseState, string> = {
  open: 'Open',
  assigned: 'Assigned',
  in_review: 'In review',
  awaiting_reply: 'Awaiting reply',
  referred: 'Referred',
  closed_no_change: 'Closed, no change',
  closed_adjusted: 'Closed, adjusted',
};

/**
 * Why a case exists (docs/methods.md#programme-outcomes): the score selected the return, or the
 * run's random review sample did. A random case is worked, and written to, like any other.
 */
export const CASE_SELECTIONS = ['score', 'random'] as const;
export const CaseSelectionSchema = z.enum(CASE_SELECTIONS);
export type CaseSelection = z.infer<typeof CaseSelectionSchema>;

/** Words for each selection on screen. */
export const CASE_SELECTION_LABELS: Record<CaseSelection, string> = {
  score: 'Selected by score',
  random: 'Chosen at random for review',
};

/**
 * The finished states: a case here has an outcome, and no ordinary move leaves it; only a
 * supervisor's reopen ({@link REOPEN_STATE}) does. The one list of them.
 */
export const FINAL_STATES: readonly CaseState[] = ['referred', 'closed_no_change', 'closed_adjusted'];

/** True for a finished case (referred or closed). */
export function isFinalState(state: CaseState): boolean {
  return FINAL_STATES.includes(state);
}

/**
 * The moves a case may make (docs/design.md#case-states). `open → assigned` happens only by claim
 * or assignment; `in_review → awaiting_reply` only by sending a document request.
 */
export const CASE_TRANSITIONS: Readonly<Record<CaseState, readonly CaseState[]>> = {
  open: ['assigned'],
  assigned: ['in_review', 'open'],
  in_review: ['awaiting_reply', 'referred', 'closed_no_change', 'closed_adjusted'],
  awaiting_reply: ['in_review', 'referred', 'closed_no_change', 'closed_adjusted'],
  referred: [],
  closed_no_change: [],
  closed_adjusted: [],
};

/** True when `from → to` is a move the workflow allows. */
export function canTransition(from: CaseState, to: CaseState): boolean {
  return CASE_TRANSITIONS[from].includes(to);
}

/**
 * Body of `POST /api/cases/:id/transition`. Closing as adjusted takes the corrected figures
 * by line code (shared/returns/corrections.ts); the adjusted amount is worked out from them
 * (the difference in tax), never typed.
 */
export const TransitionRequestSchema = z
  .object({
    to: CaseStateSchema,
    outcome: z
      .string()
      .trim()
      .max(2000)
      .check(noControlChars({ lines: true }))
      .optional(),
    /** Corrected figures by line code (required for closed_adjusted, refused otherwise). */
    corrections: CorrectionListSchema.optional(),
    /** No longer accepted: named here so a client that still sends it is told what to do instead. */
    adjustedAmount: z.unknown().optional(),
  })
  .superRefine((v, ctx) => {
    if (v.adjustedAmount !== undefined)
      ctx.addIssue({
        code: 'custom',
        path: ['adjustedAmount'],
        message: 'The adjusted amount is worked out from the corrected figures: send corrections [{lineCode, amount}] instead',
      });
    if (v.to === 'closed_adjusted' && !v.corrections)
      ctx.addIssue({ code: 'custom', path: ['corrections'], message: 'Closing as adjusted needs the corrected figures: [{lineCode, amount}]' });
    if (v.to !== 'closed_adjusted' && v.corrections)
      ctx.addIssue({ code: 'custom', path: ['corrections'], message: 'Only a case closed as adjusted has corrected figures' });
    if (isFinalState(v.to) && !v.outcome)
      ctx.addIssue({ code: 'custom', path: ['outcome'], message: 'Say in a sentence what was found or why the case moves on' });
  });
export type TransitionRequest = z.infer<typeof TransitionRequestSchema>;

/**
 * Where a finished case goes when a supervisor reopens it (issue 14): back in review, with
 * the same examiner, so the work goes on from the records already gathered. A reopen is its
 * own action (`POST /api/cases/:id/reopen`, capability `reopenCases`), not a move in
 * {@link CASE_TRANSITIONS}: examiners' moves never leave a finished state.
 */
export const REOPEN_STATE: CaseState = 'in_review';

/** Body of `POST /api/cases/:id/reopen`: why the finished case is opened again (kept in its history). */
export const ReopenRequestSchema = z.object({
  reason: z
    .string()
    .trim()
    .min(5, 'Say in a sentence why the case is reopened')
    .max(2000, 'Keep the reason under 2,000 characters')
    .check(noControlChars({ lines: true })),
});
export type ReopenRequest = z.infer<typeof ReopenRequestSchema>;

/** Body of `POST /api/cases/:id/assign`. */
export const AssignRequestSchema = z.object({ assigneeId: z.uuid('Choose an examiner') });
export type AssignRequest = z.infer<typeof AssignRequestSchema>;

/** Body of `POST /api/cases/:id/notes`. */
export const NoteRequestSchema = z.object({
  text: z
    .string()
    .trim()
    .min(1, 'Write the note first')
    .max(10_000, 'Keep a note under 10,000 characters')
    .check(noControlChars({ lines: true })),
});
export type NoteRequest = z.infer<typeof NoteRequestSchema>;

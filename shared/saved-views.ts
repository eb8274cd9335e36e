/**
 * Saved views of the queue (issue 14): a person's own named set of filters and order, kept on
 * the server so it is there again after signing in on any machine. The filters are the queue's
 * own parameters (shared/case-api.ts, `GET /api/cases`), in the form the queue's address
 * carries them, so applying a view is setting those parameters.
 */
import { z } from 'zod';
import { CaseSortSchema, NeedsKindSchema } from './case-api';
import { CASE_STATES } from './cases';
import { ACTIVITY_CODES } from './returns/line-codes';
import { noControlChars } from './text';

/** The queue's state choices a view may keep: a group name or one state. */
export const VIEW_STATES = ['active', 'finished', 'all', ...CASE_STATES] as const;

/** How many views one person may keep: enough for a day's habits, few enough to show as one row. */
export const MAX_SAVED_VIEWS = 12;

/** The filters and order a view keeps; every field is optional (absent: the queue's default). */
export const SavedViewFiltersSchema = z
  .object({
    state: z.enum(VIEW_STATES, { error: `Use one of ${VIEW_STATES.join(', ')}` }).optional(),
    sort: CaseSortSchema.optional(),
    /** An examiner's id, `me`, `none`, or `any` (everyone's cases, the examiner's "Anyone"). */
    assignee: z.union([z.literal('me'), z.literal('none'), z.literal('any'), z.uuid()], { error: 'Give an examiner id, "me", "none" or "any"' }).optional(),
    taxYear: z.number().int().min(1990).max(2100).optional(),
    activity: z.enum(ACTIVITY_CODES).optional(),
    deadlineWithin: z.number().int().min(0).max(3650).optional(),
    needs: NeedsKindSchema.optional(),
    q: z.string().trim().max(64).check(noControlChars()).optional(),
  })
  .strict();
export type SavedViewFilters = z.infer<typeof SavedViewFiltersSchema>;

/** Body of `POST /api/saved-views`. */
export const SavedViewCreateSchema = z.object({
  name: z.string({ error: 'Give the view a name' }).trim().min(1, 'Give the view a name').max(40, 'Keep the name to 40 characters').check(noControlChars()),
  filters: SavedViewFiltersSchema,
});
export type SavedViewCreate = z.infer<typeof SavedViewCreateSchema>;

/** One saved view. */
export const SavedViewSchema = z.object({ id: z.string(), name: z.string(), filters: SavedViewFiltersSchema, createdAt: z.string() });
export type SavedView = z.infer<typeof SavedViewSchema>;

/** Answer of `GET /api/saved-views`: the caller's views, oldest first (the order they were made). */
export const SavedViewListSchema = z.object({ items: z.array(SavedViewSchema) });
export type SavedViewList = z.infer<typeof SavedViewListSchema>;

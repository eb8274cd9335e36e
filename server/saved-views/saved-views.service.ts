/**
 * Saved views of the queue (issue 14, shared/saved-views.ts): each person keeps their own,
 * reads only their own, and may keep at most MAX_SAVED_VIEWS. Saving and deleting are
 * changes, logged in the same transaction; a view holds filters, not taxpayer data.
 */
import type { DataSource } from 'typeorm';
import { isUuid } from '../../shared/ids';
import { MAX_SAVED_VIEWS, type SavedView, type SavedViewCreate } from '../../shared/saved-views';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { HttpError } from '../http/errors';
import { countViews, deleteView, findViews, insertView, lockViewsOf } from './saved-views.repository';

const toDto = (r: { id: string; name: string; filters: SavedView['filters']; createdAt: Date }): SavedView => ({
  id: r.id,
  name: r.name,
  filters: r.filters,
  createdAt: r.createdAt.toISOString(),
});

/** The caller's views, oldest first. */
export async function listViews(ds: DataSource, userId: string): Promise<SavedView[]> {
  return (await findViews(ds, userId)).map(toDto);
}

/**
 * Keeps a new view for the caller.
 * @throws HttpError 409 a view of that name exists; 422 the caller already keeps the most allowed
 */
export async function saveView(ds: DataSource, audit: StaffAudit, input: SavedViewCreate): Promise<SavedView> {
  const me = audit.actor.id;
  return ds.transaction(async (m) => {
    // Serialise one person's saves, so two at once cannot both pass the count.
    await lockViewsOf(m, me);
    if ((await countViews(m, me)) >= MAX_SAVED_VIEWS) {
      throw new HttpError(
        422,
        `You keep ${MAX_SAVED_VIEWS} saved views already, the most there is room for: delete one you no longer use, then save this one.`,
      );
    }
    const row = await insertView(m, me, input.name, input.filters);
    if (!row) throw new HttpError(409, `You already have a view called "${input.name}": choose another name, or delete that view first.`);
    await recordAccess(m, audit, { action: 'change', recordType: 'saved_view', recordId: row.id, detail: `saved view "${input.name}"` });
    return toDto(row);
  });
}

/**
 * Deletes one of the caller's views.
 * @throws HttpError 404 the caller has no view with this id
 */
export async function removeView(ds: DataSource, audit: StaffAudit, id: string): Promise<void> {
  if (!isUuid(id)) throw new HttpError(404, 'No such saved view.');
  await ds.transaction(async (m) => {
    if (!(await deleteView(m, audit.actor.id, id))) throw new HttpError(404, 'No such saved view.');
    await recordAccess(m, audit, { action: 'change', recordType: 'saved_view', recordId: id, detail: 'deleted saved view' });
  });
}

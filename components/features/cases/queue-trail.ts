/**
 * "Next case" after a closing or a referral (issue 14): the next case in the order and with
 * the filters of the queue view the case was opened from.
 *
 * The queue keeps its filters in its address and its pages in react-query under
 * ['cases', queryString] (use-cases.ts). When a case screen opens, the newest cached queue
 * page that lists this case is that view: its query string and the order of its ids are
 * kept as the "trail" in the tab's sessionStorage, so a reload of the case screen still knows
 * the view. A case opened with no queue behind it (a link, a bookmark) follows the default
 * queue: cases being worked, by priority.
 */
import type { QueryClient } from '@tanstack/react-query';
import { Platform } from 'react-native';
import { apiGet } from '../../../hooks/api-client';
import { CaseListSchema, type CaseList, type CaseListItem } from '../../../shared/case-api';
import { isFinalState } from '../../../shared/cases';

/** The queue view a case was opened from: its query string and its cases' ids in order. */
export interface QueueTrail {
  qs: string;
  ids: string[];
}

const KEY = 'plumbline.queue-trail';
/** The default queue (queue-screen.tsx): cases being worked, by priority. */
const DEFAULT_QS = 'state=active&sort=priority';

function storage(): Storage | null {
  if (Platform.OS !== 'web' || typeof window === 'undefined') return null;
  try {
    return window.sessionStorage;
  } catch {
    return null;
  }
}

function stored(): QueueTrail | null {
  try {
    const raw = storage()?.getItem(KEY);
    const t = raw ? (JSON.parse(raw) as QueueTrail) : null;
    return t && typeof t.qs === 'string' && Array.isArray(t.ids) ? t : null;
  } catch {
    return null;
  }
}

function keep(t: QueueTrail): void {
  try {
    storage()?.setItem(KEY, JSON.stringify(t));
  } catch {
    // A full or refused storage only loses "Next case" after a reload.
  }
}

/** The newest cached queue page that lists the case, else the stored trail if it does. */
export function findTrail(qc: QueryClient, caseId: string): QueueTrail | null {
  const pages = qc
    .getQueryCache()
    .findAll({ queryKey: ['cases'] })
    .filter((q) => typeof q.queryKey[1] === 'string' && (q.state.data as CaseList | undefined)?.items?.some((i) => i.id === caseId))
    .sort((a, b) => b.state.dataUpdatedAt - a.state.dataUpdatedAt);
  if (pages.length > 0) {
    const t = { qs: String(pages[0].queryKey[1]), ids: (pages[0].state.data as CaseList).items.map((i) => i.id) };
    keep(t);
    return t;
  }
  const t = stored();
  return t && t.ids.includes(caseId) ? t : null;
}

/** What the case screen offers after a closing or a referral. */
export interface NextCase {
  /** The next case still being worked in the view's order, or null when none is left. */
  next: CaseListItem | null;
  /** The view's query string, for "Back to the queue". */
  qs: string;
}

/**
 * Asks the server for the view again (the finished case has left it) and picks the case
 * that followed this one; when none of those is still listed, the first new one on the page
 * (a case moved up from the next page), else the first case still being worked.
 */
export async function findNextCase(trail: QueueTrail | null, caseId: string): Promise<NextCase> {
  const qs = trail?.qs ?? DEFAULT_QS;
  const fresh = (await apiGet(`/api/cases?${qs}`, CaseListSchema)).items.filter((i) => i.id !== caseId && !isFinalState(i.state));
  const byId = new Map(fresh.map((i) => [i.id, i]));
  const seen = trail?.ids ?? [];
  const after = seen.slice(seen.indexOf(caseId) + 1);
  const next = after.map((id) => byId.get(id)).find((i) => i !== undefined) ?? fresh.find((i) => !seen.includes(i.id)) ?? fresh[0] ?? null;
  keep({ qs, ids: fresh.map((i) => i.id) });
  return { next, qs };
}

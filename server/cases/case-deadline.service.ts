/**
 * Assessment deadlines of cases (issue 13): the rule is shared/returns/assessment-deadline.ts,
 * applied and kept on the case by case-deadline.repository.ts (so the queue can sort and
 * filter on it). This file fills the cases opened before deadlines were kept and says how
 * many days are left by the office clock (server/clock.ts).
 */
import { daysUntil } from '../../shared/returns/assessment-deadline';
import { today } from '../clock';
import type { Db } from '../db/db';
import { deadlineOf, findCasesWithoutDeadline, findDeadlineFacts, refreshDeadlines } from './case-deadline.repository';

/** Fills the deadline of every case that has none yet (cases opened before it was kept). */
export async function fillMissingDeadlines(db: Db): Promise<number> {
  let n = 0;
  for (;;) {
    const ids = await findCasesWithoutDeadline(db);
    // A case whose facts cannot be found would come back every time: stop rather than loop.
    const stored = ids.length ? await refreshDeadlines(db, ids) : 0;
    if (!stored) return n;
    n += stored;
  }
}

/** The deadline of one case as the API gives it: last day, why, and days left by the office clock. */
export async function caseDeadline(
  db: Db,
  caseId: string,
  asOf: string = today(),
): Promise<{ assessBy: string | null; basis: string; explanation: string; daysLeft: number | null }> {
  const [f] = await findDeadlineFacts(db, [caseId]);
  if (!f) return { assessBy: null, basis: 'no-return', explanation: 'No return was filed: the office may assess at any time.', daysLeft: null };
  const d = deadlineOf(f);
  return { assessBy: d.assessBy, basis: d.basis, explanation: d.explanation, daysLeft: d.assessBy ? daysUntil(asOf, d.assessBy) : null };
}

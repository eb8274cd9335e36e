/**
 * Assessment deadlines of cases (issue 13): the rule is shared/returns/assessment-deadline.ts;
 * this file feeds it each case's facts, keeps the result on the case (so the queue can sort
 * and filter on it), and says how many days are left by the office clock (server/clock.ts).
 */
import { assessmentDeadline, daysUntil, type AssessmentDeadline } from '../../shared/returns/assessment-deadline';
import { centsFromNumeric } from '../../shared/returns/money';
import { today } from '../clock';
import type { Db } from '../db/db';
import { findCasesWithoutDeadline, findDeadlineFacts, storeDeadlines, type DeadlineFacts } from './case-deadline.repository';

/** The rule applied to one case's facts. */
export function deadlineOf(f: DeadlineFacts): AssessmentDeadline {
  const statementCents = centsFromNumeric(f.statementExcess) ?? 0;
  const correctedCents = centsFromNumeric(f.correctedExcess) ?? 0;
  return assessmentDeadline({
    taxYear: Number(f.taxYear),
    filedOn: f.filedOn,
    reportedIncomeCents: centsFromNumeric(f.grossIncome) ?? 0,
    // Either source may show the income left out; the larger is what is known.
    omittedIncomeCents: Math.max(statementCents, correctedCents),
  });
}

/** Computes and stores the deadlines of some cases (inside the caller's transaction when given one). */
export async function refreshDeadlines(db: Db, caseIds: string[]): Promise<number> {
  let stored = 0;
  for (let i = 0; i < caseIds.length; i += 5000) {
    const facts = await findDeadlineFacts(db, caseIds.slice(i, i + 5000));
    stored += facts.length;
    await storeDeadlines(
      db,
      facts.map((f) => {
        const d = deadlineOf(f);
        return { caseId: f.caseId, assessBy: d.assessBy, basis: d.basis };
      }),
    );
  }
  return stored;
}

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

/**
 * Case fixtures for API tests: bring scored cases into any state through the real workflow
 * (claimCase / moveCase), the way the routes and the letters feature do, so every state
 * has a genuine history behind it.
 */
import type { DataSource } from 'typeorm';
import { CaseDetailSchema, type CaseDetail } from '../../shared/case-api';
import type { CaseState } from '../../shared/cases';
import type { SessionUser } from '../../server/auth/access';
import { claimCase, moveCase } from '../../server/cases/case-workflow';
import type { SignedIn } from './auth';

/** The server's view of a signed-in test user. */
export function sessionUserOf(s: SignedIn): SessionUser {
  return { id: s.user.id, username: s.user.username, displayName: `Test ${s.user.role}`, role: s.user.role };
}

/**
 * Ids of open cases the score selected and nobody holds yet, highest priority first. Cases of
 * the random review sample are left out: which returns it draws changes with each run's seed,
 * and tests that expect "Opened by scoring" must not meet one by chance.
 */
export async function openCaseIds(ds: DataSource, limit = 1000): Promise<string[]> {
  const rows: { id: string }[] = await ds.query(`SELECT id FROM exam_case WHERE state = 'open' AND selection = 'score' ORDER BY priority DESC, id LIMIT $1`, [
    limit,
  ]);
  return rows.map((r) => r.id);
}

/** Takes the next id off a pool of {@link openCaseIds}, so each test works a case of its own. */
export function takeCase(pool: string[]): string {
  const id = pool.shift();
  if (!id) throw new Error('the fixture ran out of open cases');
  return id;
}

/** A case as `who` sees it (GET /api/cases/:id), read through the shared schema. */
export async function caseDetailAs(who: SignedIn, id: string): Promise<CaseDetail> {
  return CaseDetailSchema.parse((await who.agent.get(`/api/cases/${id}`)).body);
}

/** The path from open to each state through the workflow (the letters feature's moves included). */
const PATH: Record<CaseState, { to: CaseState; kind?: string; outcome?: string; adjustedAmount?: string; dueDate?: string }[]> = {
  open: [],
  assigned: [],
  in_review: [{ to: 'in_review' }],
  awaiting_reply: [{ to: 'in_review' }, { to: 'awaiting_reply', kind: 'document-request', dueDate: '2099-01-31' }],
  referred: [{ to: 'in_review' }, { to: 'referred', kind: 'referral', outcome: 'Sent to field audit' }],
  closed_no_change: [{ to: 'in_review' }, { to: 'closed_no_change', outcome: 'Records matched the return' }],
  closed_adjusted: [{ to: 'in_review' }, { to: 'closed_adjusted', outcome: 'Receipts overstated', adjustedAmount: '1250.00' }],
};

/**
 * Takes an open case to `state`, held by `holder` (unless the state is open).
 * @returns the case id
 */
export async function caseInState(ds: DataSource, caseId: string, state: CaseState, holder: SignedIn): Promise<string> {
  if (state === 'open') return caseId;
  const actor = sessionUserOf(holder);
  // The routes the API would log for these moves.
  await claimCase(ds, { actor, route: `POST /api/cases/${caseId}/claim` }, caseId);
  for (const step of PATH[state]) {
    await ds.transaction((m) =>
      moveCase(m, { actor, route: `POST /api/cases/${caseId}/transition` }, caseId, step.to, {
        kind: step.kind,
        outcome: step.outcome,
        adjustedAmount: step.adjustedAmount,
        dueDate: step.dueDate,
      }),
    );
  }
  return caseId;
}

/**
 * A supervisor reopens a finished case (issue 14): the case goes back in review with the same
 * examiner, the history keeps the reason and the outcome it had, the access log records the
 * reopen with its reason, and nobody else may reopen (403 from the policy table's
 * `reopenCases`, shared/permissions.ts).
 */
import { CaseChangedSchema } from '../../shared/case-api';
import { REOPEN_STATE } from '../../shared/cases';
import { postAs as post, signIn, type SignedIn } from '../helpers/auth';
import { caseDetailAs as detail, caseInState, openCaseIds, takeCase } from '../helpers/cases';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(180_000);

describe('reopening a finished case (POST /api/cases/:id/reopen)', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  let supervisor: SignedIn;
  let pool: string[];
  const take = () => takeCase(pool);

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'case-reopen', returns: 300, plantShare: 0.12 });
    examiner = await signIn(ctx, 'examiner');
    supervisor = await signIn(ctx, 'supervisor');
    pool = await openCaseIds(ctx.dataSource);
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const REASON = 'The taxpayer sent the missing receipts after the closing';

  it('puts the case back in review with its examiner, keeps the reason in the history and logs it', async () => {
    const id = await caseInState(ctx.dataSource, take(), 'closed_no_change', examiner);
    expect((await detail(supervisor, id)).actions.reopen).toBe(true);
    expect((await detail(examiner, id)).actions.reopen).toBe(false);

    const res = await post(supervisor, `/api/cases/${id}/reopen`, { reason: REASON });
    expect(res.status).toBe(200);
    expect(CaseChangedSchema.parse(res.body)).toEqual({ id, state: REOPEN_STATE, assignee: examiner.user.id });

    const d = await detail(examiner, id);
    expect(d).toMatchObject({ state: 'in_review', outcome: null, closedAt: null, adjustedAmount: null, assignee: { id: examiner.user.id } });
    expect(d.actions.reopen).toBe(false);
    // The examiner can go on working it: the closing moves are offered again.
    expect(d.actions.transitions.map((t) => t.to)).toEqual(expect.arrayContaining(['closed_no_change', 'closed_adjusted']));
    const last = d.history[d.history.length - 1];
    expect(last).toMatchObject({ kind: 'reopened', fromState: 'closed_no_change', toState: 'in_review', actorName: 'Test supervisor' });
    expect(last.summary).toBe(`Test supervisor reopened the case (it was closed, no change); it is back in review. Reason: ${REASON}`);
    // The earlier closing stays in the history, outcome and all.
    expect(d.history.some((h) => h.toState === 'closed_no_change' && h.summary.includes('Records matched the return'))).toBe(true);

    const event = await ctx.dataSource.query(`SELECT detail FROM case_event WHERE case_id = $1 AND kind = 'reopened'`, [id]);
    expect(event).toEqual([{ detail: expect.objectContaining({ reason: REASON, outcome: 'Records matched the return' }) }]);
    const log = await ctx.dataSource.query(`SELECT action, route, detail FROM access_log WHERE user_id = $1 AND record_id = $2 AND action = 'change'`, [
      supervisor.user.id,
      id,
    ]);
    expect(log).toEqual([{ action: 'change', route: `POST /api/cases/${id}/reopen`, detail: `reopened: closed_no_change → in_review; reason: ${REASON}` }]);
  });

  it('reopens a referred case too', async () => {
    const id = await caseInState(ctx.dataSource, take(), 'referred', examiner);
    const res = await post(supervisor, `/api/cases/${id}/reopen`, { reason: 'The field audit unit sent the case back' });
    expect(res.status).toBe(200);
    expect((await detail(supervisor, id)).state).toBe('in_review');
  });

  it('refuses an examiner with 403, even on their own case, and changes nothing', async () => {
    const id = await caseInState(ctx.dataSource, take(), 'closed_no_change', examiner);
    const res = await post(examiner, `/api/cases/${id}/reopen`, { reason: REASON });
    expect(res.status).toBe(403);
    expect((await detail(examiner, id)).state).toBe('closed_no_change');
    const events = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM case_event WHERE case_id = $1 AND kind = 'reopened'`, [id]);
    expect(events).toEqual([{ n: 0 }]);
  });

  it('refuses a case that is not finished (409) and a missing reason (422, on the field)', async () => {
    const id = await caseInState(ctx.dataSource, take(), 'in_review', examiner);
    const busy = await post(supervisor, `/api/cases/${id}/reopen`, { reason: REASON });
    expect(busy.status).toBe(409);
    expect(busy.body.error).toBe('Only a finished case can be reopened; this one is in review.');
    const done = await caseInState(ctx.dataSource, take(), 'closed_no_change', examiner);
    const empty = await post(supervisor, `/api/cases/${done}/reopen`, { reason: '  ' });
    expect(empty.status).toBe(422);
    expect(JSON.stringify(empty.body)).toContain('reason');
    expect((await detail(supervisor, done)).state).toBe('closed_no_change');
  });
});

/**
 * The supervisor's workload (`GET /api/workload`) and reassigning a selection of cases
 * (`POST /api/cases/reassign`), with the history kept on each case.
 */
import { BulkReassignResultSchema, CaseDetailSchema, ExaminerListSchema, WorkloadSchema } from '../../shared/case-api';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInState, openCaseIds } from '../helpers/cases';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(120_000);

describe('workload and reassignment', () => {
  let ctx: TestContext;
  let supervisor: SignedIn;
  let ivo: SignedIn;
  let nell: SignedIn;
  let total: number;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'workload', returns: 400, plantShare: 0.12 });
    supervisor = await signIn(ctx, 'supervisor');
    ivo = await signIn(ctx, 'examiner', 'ivo');
    nell = await signIn(ctx, 'examiner', 'nell');
    await ctx.dataSource.query(`UPDATE app_user SET display_name = 'Ivo Brackley' WHERE id = $1`, [ivo.user.id]);
    await ctx.dataSource.query(`UPDATE app_user SET display_name = 'Nell Quarrender' WHERE id = $1`, [nell.user.id]);
    total = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM exam_case`))[0].n;
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const post = (who: SignedIn, path: string, body: object) => who.agent.post(path).set('X-CSRF-Token', who.csrf).send(body);
  const workload = async () => {
    const res = await supervisor.agent.get('/api/workload');
    expect(res.status).toBe(200);
    return WorkloadSchema.parse(res.body);
  };
  const rowOf = (w: Awaited<ReturnType<typeof workload>>, id: string) => w.examiners.find((e) => e.examinerId === id)!;

  it("counts each examiner's assigned, in-review, awaiting-reply and overdue cases", async () => {
    const ids = await openCaseIds(ctx.dataSource, 8);
    await caseInState(ctx.dataSource, ids[0], 'assigned', ivo);
    await caseInState(ctx.dataSource, ids[1], 'assigned', ivo);
    await caseInState(ctx.dataSource, ids[2], 'in_review', ivo);
    await caseInState(ctx.dataSource, ids[3], 'awaiting_reply', ivo);
    await caseInState(ctx.dataSource, ids[4], 'awaiting_reply', ivo);
    await caseInState(ctx.dataSource, ids[5], 'closed_no_change', ivo);
    await caseInState(ctx.dataSource, ids[6], 'in_review', nell);
    // One reply is past its due date.
    await ctx.dataSource.query(`UPDATE exam_case SET due_date = current_date - 3 WHERE id = $1`, [ids[4]]);
    const w = await workload();
    expect(rowOf(w, ivo.user.id)).toEqual({
      examinerId: ivo.user.id,
      username: 'ivo',
      displayName: 'Ivo Brackley',
      assigned: 2,
      inReview: 1,
      awaitingReply: 2,
      overdue: 1,
      open: 5,
      finished30d: 1,
      deadlinesNear: 0,
    });
    expect(rowOf(w, nell.user.id)).toMatchObject({ assigned: 0, inReview: 1, awaitingReply: 0, overdue: 0, open: 1, finished30d: 0 });
    expect(w.unassigned).toBe(total - 7);
    expect(w.asOf).toMatch(/^\d{4}-\d{2}-\d{2}$/);
    // Examiners by name; the supervisor is not listed (holds nothing).
    expect(w.examiners.map((e) => e.displayName)).toEqual(['Ivo Brackley', 'Nell Quarrender']);
  });

  it("is the supervisor's (403 for an examiner) and lists examiners to assign to", async () => {
    expect((await ivo.agent.get('/api/workload')).status).toBe(403);
    const ex = ExaminerListSchema.parse((await ivo.agent.get('/api/examiners')).body);
    expect(ex.items.map((e) => e.displayName)).toEqual(['Ivo Brackley', 'Nell Quarrender']);
  });

  it('reassigns a selection to another examiner; a case not assignable is refused with its reason', async () => {
    const before = await workload();
    const ivoAssigned = (await ctx.dataSource.query(`SELECT id FROM exam_case WHERE assignee_id = $1 AND state = 'assigned' ORDER BY id`, [ivo.user.id])).map(
      (r: { id: string }) => r.id,
    );
    // A finished case is refused (a case in review would be handed over: tests/api/case-handover.test.ts).
    const ivoReview = (await ctx.dataSource.query(`SELECT id FROM exam_case WHERE assignee_id = $1 AND state = 'closed_no_change'`, [ivo.user.id]))[0].id;
    expect(ivoAssigned).toHaveLength(2);
    const res = await post(supervisor, '/api/cases/reassign', { caseIds: [...ivoAssigned, ivoReview], assigneeId: nell.user.id });
    expect(res.status).toBe(200);
    const r = BulkReassignResultSchema.parse(res.body);
    expect(r.moved.sort()).toEqual([...ivoAssigned].sort());
    expect(r.refused).toEqual([{ id: ivoReview, reason: 'A finished case cannot be given to an examiner; this one is closed, no change.' }]);
    const after = await workload();
    expect(rowOf(after, ivo.user.id).assigned).toBe(rowOf(before, ivo.user.id).assigned - 2);
    expect(rowOf(after, nell.user.id).assigned).toBe(rowOf(before, nell.user.id).assigned + 2);

    // The history stays on the case and is visible to whoever opens it.
    const d = CaseDetailSchema.parse((await nell.agent.get(`/api/cases/${ivoAssigned[0]}`)).body);
    expect(d.assignee).toEqual({ id: nell.user.id, name: 'Nell Quarrender' });
    expect(d.history.map((h) => h.summary)).toEqual([
      expect.stringMatching(/^Opened by scoring/),
      'Ivo Brackley claimed the case',
      'Test supervisor reassigned the case from Ivo Brackley to Nell Quarrender',
    ]);
    expect(d.actions.canAct).toBe(true);
    // The route the supervisor called, not `POST …/assign` (a route this action never calls).
    const log = await ctx.dataSource.query(`SELECT user_id, route, detail FROM access_log WHERE record_id = $1 AND user_id = $2 AND action = 'change'`, [
      ivoAssigned[0],
      supervisor.user.id,
    ]);
    expect(log).toEqual([{ user_id: supervisor.user.id, route: 'POST /api/cases/reassign', detail: 'assigned to Nell Quarrender' }]);
  });

  it('reassigns open cases too (first assignment), and refuses a bad selection', async () => {
    const ids = await openCaseIds(ctx.dataSource, 3);
    const ok = BulkReassignResultSchema.parse((await post(supervisor, '/api/cases/reassign', { caseIds: ids, assigneeId: ivo.user.id })).body);
    expect(ok).toEqual({ moved: ids, refused: [] });
    const again = BulkReassignResultSchema.parse(
      (await post(supervisor, '/api/cases/reassign', { caseIds: [ids[0], '00000000-0000-4000-8000-000000000000'], assigneeId: ivo.user.id })).body,
    );
    expect(again.refused).toEqual([
      { id: ids[0], reason: 'The case is already with Ivo Brackley.' },
      { id: '00000000-0000-4000-8000-000000000000', reason: 'No such case.' },
    ]);
    const toSupervisor = await post(supervisor, '/api/cases/reassign', { caseIds: ids, assigneeId: supervisor.user.id });
    expect(toSupervisor.status).toBe(422);
    expect(toSupervisor.body.error).toBe('Assign cases to an active examiner.');
    const empty = await post(supervisor, '/api/cases/reassign', { caseIds: [], assigneeId: ivo.user.id });
    expect(empty.body.issues).toEqual([{ path: 'caseIds', message: 'Choose at least one case' }]);
    expect((await post(ivo, '/api/cases/reassign', { caseIds: ids, assigneeId: nell.user.id })).status).toBe(403);
  });
});

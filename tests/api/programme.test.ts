/**
 * The Programme (issue 17): the random review sample a scoring run opens, the supervisor's list
 * of random cases, and `GET /api/programme/outcomes` checked against a hand computation.
 */
import { CaseDetailSchema, CaseListSchema } from '../../shared/case-api';
import { ControlsSchema, OutcomesSchema } from '../../shared/programme/api';
import { scoreBatchNow } from '../../server/scoring/scoring.service';
import { signIn, type SignedIn } from '../helpers/auth';
import { loadScoredBatch, type LoadedBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(120_000);

describe('programme', () => {
  let ctx: TestContext;
  let supervisor: SignedIn;
  let ivo: SignedIn;
  let b: LoadedBatch;

  beforeAll(async () => {
    ctx = await createTestContext();
    b = await loadScoredBatch(ctx.dataSource, { seed: 'programme', returns: 400, plantShare: 0.1 });
    supervisor = await signIn(ctx, 'supervisor');
    ivo = await signIn(ctx, 'examiner', 'ivo');
    await ctx.dataSource.query(`UPDATE app_user SET display_name = 'Ivo Brackley' WHERE id = $1`, [ivo.user.id]);
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const randomCases = async () =>
    (await ctx.dataSource.query(
      `SELECT c.id, c.return_id, c.state, (s.breakdown->>'selected')::boolean AS selected FROM exam_case c JOIN return_score s ON s.id = c.score_id WHERE c.batch_id = $1 AND c.selection = 'random' ORDER BY c.id`,
      [b.batchId],
    )) as { id: string; return_id: string; state: string; selected: boolean }[];

  it('a scored batch has a random sample of 1 % (4 of 400), all below the cut, the seed kept with the run', async () => {
    const rnd = await randomCases();
    expect(rnd).toHaveLength(4);
    expect(rnd.every((r) => r.selected === false && r.state === 'open')).toBe(true);
    const run = (await ctx.dataSource.query(`SELECT random_sample FROM scoring_run WHERE batch_id = $1`, [b.batchId]))[0].random_sample;
    expect(run).toMatchObject({ share: 0.01, batchSize: 400, drawn: 4 });
    expect(run.seed).toMatch(/^[0-9a-f]{32}$/);
    expect(run.rate).toBeCloseTo(4 / run.candidates, 12);
    // Scored cases are still exactly the selected returns.
    const [{ sel }] = await ctx.dataSource.query(`SELECT count(*)::int AS sel FROM return_score WHERE batch_id = $1 AND (breakdown->>'selected')::boolean`, [
      b.batchId,
    ]);
    const [{ cases }] = await ctx.dataSource.query(`SELECT count(*)::int AS cases FROM exam_case WHERE batch_id = $1 AND selection = 'score'`, [b.batchId]);
    expect(cases).toBe(sel);
    // The opening event says so.
    const ev = await ctx.dataSource.query(`SELECT detail FROM case_event WHERE case_id = $1 AND kind = 'opened'`, [rnd[0].id]);
    expect(ev[0].detail).toMatchObject({ selection: 'random' });
  });

  it('scoring the batch again draws no second sample', async () => {
    await scoreBatchNow(ctx.dataSource, b.batchId);
    expect(await randomCases()).toHaveLength(4);
  });

  it('random cases are reachable like any other, marked on the list and the detail', async () => {
    const rnd = await randomCases();
    const list = CaseListSchema.parse((await ivo.agent.get(`/api/cases?batch=${b.batchId}&pageSize=100&state=all`)).body);
    expect(list.total).toBeGreaterThan(4);
    const marked = list.items.filter((i) => i.selection === 'random').map((i) => i.id);
    const all = list.total <= 100;
    if (all) expect(marked.sort()).toEqual(rnd.map((r) => r.id).sort());
    const res = await ivo.agent.get(`/api/cases/${rnd[0].id}`);
    expect(res.status).toBe(200);
    const d = CaseDetailSchema.parse(res.body);
    expect(d.selection).toBe('random');
    expect(d.history[0].summary).toMatch(/^Opened for random review/);
  });

  it("GET /api/programme/controls lists the batch's random cases for a supervisor; 403 for an examiner", async () => {
    const rnd = await randomCases();
    const res = await supervisor.agent.get(`/api/programme/controls?batch=${b.batchId}`);
    expect(res.status).toBe(200);
    const c = ControlsSchema.parse(res.body);
    expect(c.items.map((i) => i.caseId).sort()).toEqual(rnd.map((r) => r.id).sort());
    expect(c.items.every((i) => /\S/.test(i.returnRef))).toBe(true);
    expect((await ivo.agent.get(`/api/programme/controls?batch=${b.batchId}`)).status).toBe(403);
    expect((await ivo.agent.get('/api/programme/outcomes')).status).toBe(403);
    expect((await supervisor.agent.get('/api/programme/controls?batch=nope')).status).toBe(422);
    expect((await supervisor.agent.get('/api/programme/outcomes?from=31-01-2026')).status).toBe(422);
  });

  it('outcomes agree with a hand computation on a small fixture', async () => {
    const before = OutcomesSchema.parse((await supervisor.agent.get('/api/programme/outcomes')).body);
    expect(before.openRandom).toBe(4);
    expect(before.overall.selected.closed).toBe(0);
    expect(before.overall.selected.rate.enoughData).toBe(false);

    // Fixture: 12 selected cases closed (6 adjusted: 100 … 600), one selected case referred, and
    // 10 random cases closed (2 adjusted: 50 and 150): the 4 drawn plus 6 more marked random here.
    const rnd = (await randomCases()).map((r) => r.id);
    const sel: string[] = (
      await ctx.dataSource.query(`SELECT id FROM exam_case WHERE batch_id = $1 AND selection = 'score' ORDER BY id LIMIT 19`, [b.batchId])
    ).map((r: { id: string }) => r.id);
    const extra = sel.slice(13, 19);
    await ctx.dataSource.query(`UPDATE exam_case SET selection = 'random' WHERE id = ANY($1::uuid[])`, [extra]);
    const random = [...rnd, ...extra];
    const close = (id: string, state: string, amount: string | null, at: string) =>
      ctx.dataSource.query(`UPDATE exam_case SET state = $2, adjusted_amount = $3, outcome = 'fixture', assignee_id = $4, closed_at = $5 WHERE id = $1`, [
        id,
        state,
        amount,
        ivo.user.id,
        at,
      ]);
    for (let i = 0; i < 12; i++)
      await close(sel[i], i < 6 ? 'closed_adjusted' : 'closed_no_change', i < 6 ? `${(i + 1) * 100}.00` : null, '2026-03-03T10:00:00Z');
    await close(sel[12], 'referred', null, '2026-03-04T10:00:00Z');
    for (let i = 0; i < 10; i++)
      await close(random[i], i < 2 ? 'closed_adjusted' : 'closed_no_change', i === 0 ? '50.00' : i === 1 ? '150.00' : null, '2026-03-10T10:00:00Z');

    const res = await supervisor.agent.get(`/api/programme/outcomes?batch=${b.batchId}&from=2026-03-01&to=2026-03-31`);
    expect(res.status).toBe(200);
    const o = OutcomesSchema.parse(res.body);
    const s = o.overall.selected;
    const r = o.overall.random;
    // Wilson by hand (z = 1.959964, z² = 3.841459):
    // 6/12: centre (0.5 + z²/24)/(1 + z²/12) = 0.5; half z·√(0.25/12 + z²/576)/(1 + z²/12) = 0.246224 → 0.2538–0.7462.
    expect(s).toMatchObject({ closed: 12, adjusted: 6, referred: 1 });
    expect(s.rate.estimate).toBeCloseTo(0.5, 4);
    expect(s.rate.low).toBeCloseTo(0.2538, 3);
    expect(s.rate.high).toBeCloseTo(0.7462, 3);
    expect(s.rate.method).toBe('Wilson score interval');
    expect(s.rate.enoughData).toBe(true);
    // 2/10: centre (0.2 + z²/20)/(1 + z²/10) = 0.283260; half z·√(0.016 + z²/400)/(1 + z²/10) = 0.226578 → 0.0567–0.5098.
    expect(r).toMatchObject({ closed: 10, adjusted: 2, referred: 0 });
    expect(r.rate.low).toBeCloseTo(0.0567, 3);
    expect(r.rate.high).toBeCloseTo(0.5098, 3);
    expect(r.rate.enoughData).toBe(true);
    // Mean of 100 … 600 = 350, s = √35000 = 187.083, t(0.975, 5) = 2.570582: 350 ± 196.33 → 153.67–546.33;
    // six adjusted cases are fewer than 10: not enough data.
    expect(s.meanAdjusted.estimate).toBe(350);
    expect(s.meanAdjusted.low).toBeCloseTo(153.67, 1);
    expect(s.meanAdjusted.high).toBeCloseTo(546.33, 1);
    expect(s.meanAdjusted.method).toBe("Student's t interval");
    expect(s.meanAdjusted.enoughData).toBe(false);
    // Lift (6/12)/(2/10) = 2.5; Katz SE √(1/6 − 1/12 + 1/2 − 1/10) = 0.695222; 2.5·exp(∓1.959964·0.695222) = 0.6400–9.7663.
    expect(o.overall.rateLift.estimate).toBeCloseTo(2.5, 4);
    expect(o.overall.rateLift.low).toBeCloseTo(0.64, 2);
    expect(o.overall.rateLift.high).toBeCloseTo(9.766, 2);
    expect(o.overall.rateLift.method).toMatch(/^Katz log method/);
    expect(o.overall.rateLift.enoughData).toBe(false);
    // Mean amounts 350 over 100: 3.5.
    expect(o.overall.amountLift.estimate).toBeCloseTo(3.5, 4);

    // Every finished case falls in one decile; throughput per examiner and week; weeks from Monday.
    expect(o.byDecile.reduce((n, d) => n + d.selected.closed + d.random.closed, 0)).toBe(22);
    expect(o.examinerWeeks).toEqual([
      { examinerId: ivo.user.id, name: 'Ivo Brackley', week: '2026-03-02', finished: 13 },
      { examinerId: ivo.user.id, name: 'Ivo Brackley', week: '2026-03-09', finished: 10 },
    ]);
    expect(o.weekly).toEqual([
      { week: '2026-03-02', finished: 13, adjusted: 6, adjustedTotal: '2100.00' },
      { week: '2026-03-09', finished: 10, adjusted: 2, adjustedTotal: '200.00' },
    ]);
    expect(o.byExaminer).toHaveLength(1);
    expect(o.byExaminer[0].closuresPerWeek).toBe(11.5);
    expect(o.byBatch).toHaveLength(1);
    expect(o.openRandom).toBe(0);
    // A factor's group holds selected cases whose score it added points to.
    for (const f of o.byFactor) expect(f.outcome.closed).toBeLessThanOrEqual(12);

    const empty = OutcomesSchema.parse((await supervisor.agent.get(`/api/programme/outcomes?from=2026-04-01`)).body);
    expect(empty.overall.selected.closed).toBe(0);
  });
});

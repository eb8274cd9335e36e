import { QUEUES } from '../../server/queue/queues';
import { scoreBatchNow } from '../../server/scoring/scoring.service';
import { PerformanceSchema, ProfileListSchema } from '../../shared/scoring/profile-api';
import { DEFAULT_SCORING_SETTINGS } from '../../shared/scoring/settings';
import { signIn, type SignedIn } from '../helpers/auth';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(60_000);

describe('scoring profiles', () => {
  let ctx: TestContext;
  let sup: SignedIn;
  let ex: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    sup = await signIn(ctx, 'supervisor');
    ex = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('starts with versions 1, 2 and 3 from the migrations, 3 (the default profile) active, readable by examiners', async () => {
    const res = await ex.agent.get('/api/scoring/profiles');
    const list = ProfileListSchema.parse(res.body);
    expect(list.items.map((p) => [p.version, p.active])).toEqual([
      [3, true],
      [2, false],
      [1, false],
    ]);
    expect(list.items[0].settings).toEqual(DEFAULT_SCORING_SETTINGS);
  });

  it('adds a new version (the old one stays, inactive) and refuses bad settings with every path named', async () => {
    const settings = { ...DEFAULT_SCORING_SETTINGS, weights: { ...DEFAULT_SCORING_SETTINGS.weights, cashHeavy: 0 } };
    const res = await sup.agent.post('/api/scoring/profiles').set('X-CSRF-Token', sup.csrf).send({ settings, note: 'cash-heavy off for the pilot' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ version: 4, active: true, note: 'cash-heavy off for the pilot' });
    const list = ProfileListSchema.parse((await sup.agent.get('/api/scoring/profiles')).body);
    expect(list.items.map((p) => [p.version, p.active])).toEqual([
      [4, true],
      [3, false],
      [2, false],
      [1, false],
    ]);
    const bad = await sup.agent
      .post('/api/scoring/profiles')
      .set('X-CSRF-Token', sup.csrf)
      .send({ settings: { ...settings, selectionCut: 140, weights: { ...settings.weights, digits: -1 } }, note: 'x' });
    expect(bad.status).toBe(422);
    expect(bad.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['note', 'settings.selectionCut', 'settings.weights.digits']);
    const back = await sup.agent.post('/api/scoring/profiles/1/activate').set('X-CSRF-Token', sup.csrf);
    expect(back.status).toBe(204);
    expect((await ctx.dataSource.query(`SELECT version FROM scoring_profile WHERE active`))[0].version).toBe(1);
  });

  it('learns from closed cases: rates per factor and weights from the outcome model, each with its interval and a back-test', async () => {
    const b = await loadScoredBatch(ctx.dataSource, { seed: 'perf', returns: 600, plantShare: 0.15 });
    // Close every case: adjusted when its score flagged totals that do not add up, else no change.
    await ctx.dataSource.query(
      `UPDATE exam_case c SET state = CASE WHEN EXISTS (
          SELECT 1 FROM return_score s, jsonb_array_elements(s.breakdown->'components') comp
           WHERE s.id = c.score_id AND comp->>'key' = 'totalsMismatch' AND (comp->>'points')::numeric > 0)
        THEN 'closed_adjusted' ELSE 'closed_no_change' END, closed_at = now()
       WHERE batch_id = $1`,
      [b.batchId],
    );
    const perf = PerformanceSchema.parse((await sup.agent.get('/api/scoring/performance')).body);
    expect(perf.closedCases).toBeGreaterThan(0);
    const totals = perf.factors.find((f) => f.key === 'totalsMismatch')!;
    expect(totals.adjustedRate).toBe(1);
    // The random review cases (6 of 600) are closed too and counted apart.
    expect(perf.learned.closed).toBe(perf.closedCases);
    expect(perf.learned.randomClosed).toBe(6);
    const fit = perf.learned.fit!;
    expect(fit).not.toBeNull();
    expect(fit.fitted + fit.heldBack).toBe(perf.learned.closed);
    for (const s of fit.suggestions) {
      expect(s.low).toBeLessThanOrEqual(s.high);
      expect(s.suggested).toBeGreaterThanOrEqual(0);
      expect(s.suggested).toBeLessThanOrEqual(100);
    }
    // The only factor that decides the outcome here gets the largest suggested weight. Others
    // may tie with it at the cap of 100 (the random sample, drawn afresh each run, weighs 100×),
    // so the check is that none is above it, not the order of a sort among equals. Its interval
    // is wide (near separation, and the heavy random cases) but lies wholly above 100, so the
    // fit says 100 rather than keeping the current weight (it did keep it, once, in CI).
    const totalsFit = fit.suggestions.find((x) => x.key === 'totalsMismatch')!;
    expect(totalsFit.low).toBeGreaterThan(100);
    expect(totalsFit.enoughData).toBe(true);
    expect(totalsFit.suggested).toBe(Math.max(...fit.suggestions.map((x) => x.suggested)));
    expect(fit.backTest.suggested.k).toBe(fit.backTest.current.k);
    expect(fit.backTest.suggested.precisionAtK).toBeGreaterThanOrEqual(fit.backTest.current.precisionAtK);
  });

  it('queues a re-score of a scored batch under another version, once', async () => {
    const b = await loadScoredBatch(ctx.dataSource, { seed: 'rescore', returns: 50, plantShare: 0.1 });
    const before = await ctx.boss.getQueueSize(QUEUES.scoreBatch);
    const res = await sup.agent.post(`/api/batches/${b.batchId}/rescore`).set('X-CSRF-Token', sup.csrf).send({ version: 2 });
    expect(res.status).toBe(202);
    expect(await ctx.boss.getQueueSize(QUEUES.scoreBatch)).toBe(before + 1);
    await scoreBatchNow(ctx.dataSource, b.batchId, 2);
    const again = await sup.agent.post(`/api/batches/${b.batchId}/rescore`).set('X-CSRF-Token', sup.csrf).send({ version: 2 });
    expect(again.status).toBe(409);
    const [{ v1, v2 }] = await ctx.dataSource.query(
      `SELECT count(*) FILTER (WHERE profile_version = 1)::int AS v1, count(*) FILTER (WHERE profile_version = 2)::int AS v2 FROM return_score WHERE batch_id = $1`,
      [b.batchId],
    );
    expect({ v1, v2 }).toEqual({ v1: 50, v2: 50 });
  });
});

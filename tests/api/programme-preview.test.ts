/**
 * Selection by capacity and the Scoring screen's preview (issue 17): the preview's counts equal
 * what a real re-score with the same profile then selects; a profile's random share is what its
 * run draws. Figures compared are computed here from the database (no outside source needed).
 */
import { scoreBatchNow } from '../../server/scoring/scoring.service';
import { PreviewSchema, type Preview } from '../../shared/programme/api';
import { ProfileListSchema } from '../../shared/scoring/profile-api';
import type { ScoringSettings } from '../../shared/scoring/settings';
import { signIn, type SignedIn } from '../helpers/auth';
import { loadScoredBatch, type LoadedBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(180_000);

describe('selection by capacity and the preview', () => {
  let ctx: TestContext;
  let sup: SignedIn;
  let b: LoadedBatch;
  /** The active version the batch is scored under, and its settings. */
  let active: { version: number; settings: ScoringSettings };

  beforeAll(async () => {
    ctx = await createTestContext();
    b = await loadScoredBatch(ctx.dataSource, { seed: 'preview', returns: 400, plantShare: 0.1 });
    sup = await signIn(ctx, 'supervisor');
    const list = ProfileListSchema.parse((await sup.agent.get('/api/scoring/profiles')).body);
    active = list.items.find((p) => p.active)!;
  });
  afterAll(async () => {
    await ctx?.close();
  });

  /** Returns the score selected under a version (breakdown.selected), as a set of return ids. */
  const selectedUnder = async (version: number) =>
    new Set<string>(
      (
        await ctx.dataSource.query(`SELECT return_id FROM return_score WHERE batch_id = $1 AND profile_version = $2 AND (breakdown->>'selected')::boolean`, [
          b.batchId,
          version,
        ])
      ).map((r: { return_id: string }) => r.return_id),
    );

  /** Previews, saves as a new active version, re-scores for real, and compares. */
  async function previewThenRescore(settings: ScoringSettings, previousVersion: number): Promise<{ preview: Preview; version: number; chosen: Set<string> }> {
    const before = await selectedUnder(previousVersion);
    const res = await sup.agent.post('/api/scoring/preview').set('X-CSRF-Token', sup.csrf).send({ batchId: b.batchId, settings });
    expect(res.status).toBe(200);
    const preview = PreviewSchema.parse(res.body);
    expect(preview.version).toBe(previousVersion);
    // Nothing changed by the preview: no new version, no new run.
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM scoring_run WHERE batch_id = $1`, [b.batchId]))[0].n).toBeGreaterThan(0);
    const saved = await sup.agent.post('/api/scoring/profiles').set('X-CSRF-Token', sup.csrf).send({ settings, note: 'preview test' });
    expect(saved.status).toBe(201);
    const version: number = saved.body.version;
    await scoreBatchNow(ctx.dataSource, b.batchId, version);
    const chosen = await selectedUnder(version);
    let stay = 0;
    for (const id of chosen) if (before.has(id)) stay++;
    expect({ selected: preview.selected, stay: preview.stay, leave: preview.leave, join: preview.join }).toEqual({
      selected: chosen.size,
      stay,
      leave: before.size - stay,
      join: chosen.size - stay,
    });
    return { preview, version, chosen };
  }

  it('refuses an unknown batch (404) and an examiner (403); saves nothing', async () => {
    const runs = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM scoring_run`))[0].n;
    const res = await sup.agent
      .post('/api/scoring/preview')
      .set('X-CSRF-Token', sup.csrf)
      .send({ batchId: '01890000-0000-7000-8000-000000000000', settings: active.settings });
    expect(res.status).toBe(404);
    const ex = await signIn(ctx, 'examiner');
    expect((await ex.agent.post('/api/scoring/preview').set('X-CSRF-Token', ex.csrf).send({ batchId: b.batchId, settings: active.settings })).status).toBe(403);
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM scoring_run`))[0].n).toBe(runs);
  });

  it('the same profile previews today’s selection exactly: all stay', async () => {
    const res = await sup.agent.post('/api/scoring/preview').set('X-CSRF-Token', sup.csrf).send({ batchId: b.batchId, settings: active.settings });
    const p = PreviewSchema.parse(res.body);
    const today = await selectedUnder(active.version);
    expect(today.size).toBeGreaterThan(0);
    expect(p).toMatchObject({ selected: today.size, stay: today.size, leave: 0, join: 0, exact: true, cut: active.settings.selectionCut });
  });

  it('by capacity (7 cases a month for 3 months) with other weights and a 2 % random share: the preview equals the re-score', async () => {
    const settings: ScoringSettings = {
      ...active.settings,
      weights: { ...active.settings.weights, digits: 20, cashHeavy: 15, refundLarge: 30 },
      capacity: { casesPerMonth: 7, months: 3 },
      randomShare: 0.02,
    };
    const { preview, version, chosen } = await previewThenRescore(settings, active.version);
    expect(preview.selected).toBe(21);
    // The cut is the lowest selected score, and every unselected return scores at most that.
    const scores: { return_id: string; risk_score: string }[] = await ctx.dataSource.query(
      `SELECT return_id, risk_score FROM return_score WHERE batch_id = $1 AND profile_version = $2 AND status = 'scored'`,
      [b.batchId, version],
    );
    const lowest = Math.min(...scores.filter((s) => chosen.has(s.return_id)).map((s) => Number(s.risk_score)));
    expect(preview.cut).toBe(lowest);
    expect(scores.filter((s) => !chosen.has(s.return_id)).every((s) => Number(s.risk_score) <= lowest)).toBe(true);
    // Every selected return has a case carrying the new score.
    const [{ n }] = await ctx.dataSource.query(
      `SELECT count(*)::int AS n FROM exam_case c JOIN return_score s ON s.id = c.score_id WHERE s.batch_id = $1 AND s.profile_version = $2 AND (s.breakdown->>'selected')::boolean`,
      [b.batchId, version],
    );
    expect(n).toBe(21);
    // Every case under the new version (selected or drawn at random) says the cut that filled the capacity.
    const cuts: { cut: string }[] = await ctx.dataSource.query(
      `SELECT DISTINCT s.breakdown->>'selectionCut' AS cut FROM exam_case c JOIN return_score s ON s.id = c.score_id WHERE s.batch_id = $1 AND s.profile_version = $2`,
      [b.batchId, version],
    );
    expect(cuts.map((c) => Number(c.cut))).toEqual([preview.cut]);
    // The profile's random share is what the run drew (2 % of 400), with the seed kept.
    const run = (await ctx.dataSource.query(`SELECT random_sample FROM scoring_run WHERE batch_id = $1 AND profile_version = $2`, [b.batchId, version]))[0]
      .random_sample;
    expect(run).toMatchObject({ share: 0.02, batchSize: 400, drawn: 8 });
    expect(run.seed).toMatch(/^[0-9a-f]{32}$/);
  });

  it('by a fixed cut with other weights: the preview equals the re-score', async () => {
    const last = Number((await ctx.dataSource.query(`SELECT max(version) AS v FROM scoring_profile`))[0].v);
    const settings: ScoringSettings = {
      ...active.settings,
      weights: { ...active.settings.weights, totalsMismatch: 60, roundAmounts: 25 },
      selectionCut: 18,
    };
    const { preview } = await previewThenRescore(settings, last);
    expect(preview.cut).toBe(18);
    expect(preview.selected).toBeGreaterThan(0);
  });

  it('refuses a capacity of no cases with the field named (422)', async () => {
    const res = await sup.agent
      .post('/api/scoring/preview')
      .set('X-CSRF-Token', sup.csrf)
      .send({ batchId: b.batchId, settings: { ...active.settings, capacity: { casesPerMonth: 0, months: 3 } } });
    expect(res.status).toBe(422);
    expect(res.body.issues.map((i: { path: string }) => i.path)).toEqual(['settings.capacity.casesPerMonth']);
  });
});

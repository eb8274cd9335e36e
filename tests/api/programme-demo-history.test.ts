/**
 * The invented demo history (server/seed/demo-history.ts): earlier batches whose cases are all
 * closed, random review cases among them, outcomes following the planted kinds, so the Programme
 * screen has figures on first start. The whole first-start seed is timed and printed.
 */
import { seedDemo } from '../../server/seed/demo-seed';
import { OutcomesSchema } from '../../shared/programme/api';
import { PerformanceSchema } from '../../shared/scoring/profile-api';
import { signIn } from '../helpers/auth';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(300_000);

describe('invented demo history', () => {
  let ctx: TestContext;
  let line: string;
  let seconds: number;
  beforeAll(async () => {
    ctx = await createTestContext();
    // The whole seed of a first `npm start` (accounts, history, the current demo batch), timed.
    const t0 = Date.now();
    line = await seedDemo(ctx.dataSource);
    seconds = (Date.now() - t0) / 1000;
    console.log(`demo seed on an empty office in ${seconds.toFixed(1)} s: ${line}`);
  });
  afterAll(async () => {
    await ctx?.close();
  });

  it('closes every case of two earlier batches labelled as invented, random review cases among them, in the past', async () => {
    const all = await ctx.dataSource.query(`SELECT id, label, created_at FROM filing_batch ORDER BY created_at`);
    // The two invented earlier batches, then the current demo batch (the newest).
    expect(all).toHaveLength(3);
    expect(all[2].label).toBeNull();
    const batches = all.slice(0, 2);
    for (const b of batches) {
      expect(b.label).toMatch(/^Invented demo history/);
      expect(new Date(b.created_at).getTime()).toBeLessThan(Date.now() - 7 * 24 * 3600 * 1000);
    }
    const [c] = await ctx.dataSource.query(
      `SELECT count(*)::int AS all, count(*) FILTER (WHERE state IN ('closed_adjusted', 'closed_no_change'))::int AS closed,
              count(*) FILTER (WHERE selection = 'random')::int AS random, count(*) FILTER (WHERE closed_at > now())::int AS future
         FROM exam_case`,
    );
    expect(c.closed).toBe(c.all);
    expect(c.random).toBeGreaterThanOrEqual(80);
    expect(c.future).toBe(0);
    expect(line).toMatch(/invented demo history/);
  });

  it('gives the Programme figures: selected cases adjusted far more often than random ones, with enough data for a lift', async () => {
    const sup = await signIn(ctx, 'supervisor');
    const o = OutcomesSchema.parse((await sup.agent.get('/api/programme/outcomes')).body);
    expect(o.overall.selected.rate.enoughData).toBe(true);
    expect(o.overall.random.rate.enoughData).toBe(true);
    expect(o.overall.selected.rate.estimate!).toBeGreaterThan(o.overall.random.rate.estimate!);
    expect(o.weekly.length).toBeGreaterThan(5);
    const perf = PerformanceSchema.parse((await sup.agent.get('/api/scoring/performance')).body);
    expect(perf.learned.fit).not.toBeNull();
  });
});

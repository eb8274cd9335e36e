import { createTestContext, type TestContext } from '../helpers/test-app';
import { loadGeneratedBatch } from '../helpers/scored-batch';
import { scoreBatchNow } from '../../server/scoring/scoring.service';
import { ScoreBreakdownSchema } from '../../shared/scoring/breakdown';
import { benjaminiHochberg } from '../../shared/scoring/calibration';
import { PENDING_Q_TEXT } from '../../shared/scoring/score-return';

jest.setTimeout(60_000);

describe('scoring a batch (in-process, the code the worker runs)', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('scores every return once, opens cases at the cut, marks the batch scored, and a second run changes nothing', async () => {
    const b = await loadGeneratedBatch(ctx.dataSource, { seed: 'inline-1', returns: 400, plantShare: 0.1 });
    const first = await scoreBatchNow(ctx.dataSource, b.batchId);
    expect(first.scored + first.failed).toBe(400);
    const again = await scoreBatchNow(ctx.dataSource, b.batchId);
    expect(again).toMatchObject({ scored: 0, failed: 0 });
    const [{ n, distinct }] = await ctx.dataSource.query(
      `SELECT count(*)::int AS n, count(DISTINCT return_id)::int AS distinct FROM return_score WHERE batch_id = $1`,
      [b.batchId],
    );
    expect({ n, distinct }).toEqual({ n: 400, distinct: 400 });
    const batch = (await ctx.dataSource.query(`SELECT state, scored_count FROM filing_batch WHERE id = $1`, [b.batchId]))[0];
    expect(batch).toEqual({ state: 'scored', scored_count: 400 });
    const [{ selected }] = await ctx.dataSource.query(
      `SELECT count(*)::int AS selected FROM return_score WHERE batch_id = $1 AND (breakdown->>'selected')::boolean`,
      [b.batchId],
    );
    const [{ cases }] = await ctx.dataSource.query(`SELECT count(*)::int AS cases FROM exam_case WHERE batch_id = $1 AND selection = 'score'`, [b.batchId]);
    expect(cases).toBe(selected);
    expect(cases).toBeGreaterThan(0);
    // Plus the run's random review sample: 1 % of 400 (docs/methods.md#programme-outcomes).
    const [{ random }] = await ctx.dataSource.query(`SELECT count(*)::int AS random FROM exam_case WHERE batch_id = $1 AND selection = 'random'`, [b.batchId]);
    expect(random).toBe(4);
    const opened = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM case_event WHERE kind = 'opened'`);
    expect(opened[0].n).toBe(cases + random);
    const one = (await ctx.dataSource.query(`SELECT breakdown FROM return_score WHERE batch_id = $1 LIMIT 1`, [b.batchId]))[0];
    expect(() => ScoreBreakdownSchema.parse(one.breakdown)).not.toThrow();
  });

  it("the run's finishing step gives every score its Benjamini–Hochberg q-value over the whole batch, in the evidence too", async () => {
    const b = await loadGeneratedBatch(ctx.dataSource, { seed: 'inline-bh', returns: 120, plantShare: 0.1 });
    await scoreBatchNow(ctx.dataSource, b.batchId);
    const rows: { p: number; q: number; evidence: string }[] = await ctx.dataSource.query(
      `SELECT (breakdown->'pattern'->>'p')::float8 AS p, (breakdown->'pattern'->>'q')::float8 AS q,
              (SELECT c->>'evidence' FROM jsonb_array_elements(breakdown->'components') c WHERE c->>'key' = 'digits') AS evidence
         FROM return_score WHERE batch_id = $1 AND status = 'scored'`,
      [b.batchId],
    );
    expect(rows).toHaveLength(120);
    const expected = benjaminiHochberg(rows.map((r) => r.p));
    rows.forEach((r, i) => {
      expect(r.q).toBeCloseTo(expected[i], 12);
      expect(r.q).toBeGreaterThanOrEqual(r.p - 1e-15);
      expect(r.evidence).not.toContain(PENDING_Q_TEXT);
      expect(r.evidence).toContain("Across the batch's 120 scored returns: q = ");
    });
  });

  it('records a return that cannot be scored, with the reason, and finishes the batch', async () => {
    const b = await loadGeneratedBatch(ctx.dataSource, { seed: 'inline-2', returns: 60, plantShare: 0 });
    const victim = [...b.returnIdOf.values()][7];
    await ctx.dataSource.query(`DELETE FROM line_item WHERE return_id = $1`, [victim]);
    const r = await scoreBatchNow(ctx.dataSource, b.batchId);
    expect(r).toMatchObject({ scored: 59, failed: 1 });
    const row = (await ctx.dataSource.query(`SELECT status, failure_reason, risk_score FROM return_score WHERE return_id = $1`, [victim]))[0];
    expect(row).toEqual({ status: 'failed', failure_reason: 'the return has no line items on file', risk_score: null });
    expect((await ctx.dataSource.query(`SELECT state FROM filing_batch WHERE id = $1`, [b.batchId]))[0].state).toBe('scored');
  });

  it("version 3: a preparer's pool leaves the whole client out and is judged against random sets of as many clients (docs/methods.md#calibrated-pattern-evidence)", async () => {
    const b = await loadGeneratedBatch(ctx.dataSource, { seed: 'inline-v3', returns: 400, plantShare: 0.05 });
    await scoreBatchNow(ctx.dataSource, b.batchId);
    const run = (await ctx.dataSource.query(`SELECT profile_version, context FROM scoring_run WHERE batch_id = $1`, [b.batchId]))[0];
    expect(run.profile_version).toBe(3);
    // One fitted null per pool size (clients − 1): [scale, df] of the scaled chi-square (Satterthwaite), both positive.
    const fits = Object.entries(run.context.preparerNull as Record<string, [number, number]>);
    expect(fits.length).toBeGreaterThan(0);
    for (const [k, [scale, df]] of fits) {
      expect(Number(k)).toBeGreaterThan(0);
      expect(scale).toBeGreaterThan(0);
      expect(df).toBeGreaterThan(0);
    }
    const evidence: { e: string }[] = await ctx.dataSource.query(
      `SELECT c->>'evidence' AS e FROM return_score s, jsonb_array_elements(s.breakdown->'components') c
        WHERE s.batch_id = $1 AND c->>'key' = 'preparerDigits' AND c->>'evidence' LIKE 'First digits%'`,
      [b.batchId],
    );
    expect(evidence.length).toBeGreaterThan(0);
    for (const { e } of evidence) expect(e).toContain("(this client's own returns left out)");
  });

  it('re-scoring under a new profile version keeps the old scores', async () => {
    const b = await loadGeneratedBatch(ctx.dataSource, { seed: 'inline-3', returns: 80, plantShare: 0.1 });
    await scoreBatchNow(ctx.dataSource, b.batchId);
    // The active (default) profile is version 3 (server/db/migrations/1766000000000-scoring-v3.ts).
    const before = await ctx.dataSource.query(`SELECT return_id, risk_score FROM return_score WHERE batch_id = $1 AND profile_version = 3 ORDER BY return_id`, [
      b.batchId,
    ]);
    // One case is closed before the re-score: it must keep the score it was decided on.
    const closed = (
      await ctx.dataSource.query(
        `UPDATE exam_case SET state = 'closed_no_change' WHERE id = (SELECT id FROM exam_case WHERE batch_id = $1 LIMIT 1) RETURNING id, score_id`,
        [b.batchId],
      )
    )[0][0];
    await ctx.dataSource.query(
      `INSERT INTO scoring_profile (version, settings, note) SELECT 4, jsonb_set(settings, '{weights,cashHeavy}', '40'), 'test' FROM scoring_profile WHERE version = 3`,
    );
    await scoreBatchNow(ctx.dataSource, b.batchId, 4);
    const kept = (await ctx.dataSource.query(`SELECT score_id FROM exam_case WHERE id = $1`, [closed.id]))[0];
    expect(kept.score_id).toBe(closed.score_id);
    const after = await ctx.dataSource.query(`SELECT return_id, risk_score FROM return_score WHERE batch_id = $1 AND profile_version = 3 ORDER BY return_id`, [
      b.batchId,
    ]);
    expect(after).toEqual(before);
    const v4 = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM return_score WHERE batch_id = $1 AND profile_version = 4`, [b.batchId]);
    expect(v4[0].n).toBe(80);
  });
});

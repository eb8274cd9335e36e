/**
 * Related cases on the case screen (issue 14), through GET /api/cases/:id on a real scored
 * batch: the taxpayer's other returns on file with their cases and outcomes, and the other
 * cases opened on returns the same preparer filed in the same batch. Expected values are
 * counted straight from the tables, not through the repository under test.
 */
import { CaseDetailSchema, PREPARER_CASES_SHOWN } from '../../shared/case-api';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInState } from '../helpers/cases';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(180_000);

describe('related cases on GET /api/cases/:id', () => {
  let ctx: TestContext;
  let examiner: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'case-related', returns: 400, plantShare: 0.12 });
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const detail = async (id: string) => CaseDetailSchema.parse((await examiner.agent.get(`/api/cases/${id}`)).body);

  it("lists the taxpayer's other returns, newest year first, with the outcome of a finished case", async () => {
    // A taxpayer with another return on file that also has a case (one was selected in two years).
    const [pick] = await ctx.dataSource.query(
      `SELECT c.id AS "caseId", c.taxpayer_id AS "taxpayerId", c.return_id AS "returnId"
         FROM exam_case c
        WHERE c.state = 'open' AND EXISTS (SELECT 1 FROM exam_case o WHERE o.taxpayer_id = c.taxpayer_id AND o.id <> c.id AND o.state = 'open')
        ORDER BY c.priority DESC, c.id LIMIT 1`,
    );
    expect(pick).toBeDefined();
    const others: { id: string; ref: string; year: number }[] = await ctx.dataSource.query(
      `SELECT id, return_ref AS ref, tax_year::int AS year FROM tax_return WHERE taxpayer_id = $1 AND id <> $2 ORDER BY tax_year DESC, return_ref`,
      [pick.taxpayerId, pick.returnId],
    );
    const d = await detail(pick.caseId);
    expect(d.related?.taxpayerReturns.map((r) => [r.returnRef, r.taxYear])).toEqual(others.map((o) => [o.ref, o.year]));
    expect(d.related?.taxpayerReturns.some((r) => r.returnId === d.return.id)).toBe(false);

    // Another case of the same taxpayer, once closed, shows its outcome here.
    const [sibling] = await ctx.dataSource.query(
      `SELECT id, return_id AS "returnId" FROM exam_case WHERE taxpayer_id = $1 AND id <> $2 AND state = 'open' LIMIT 1`,
      [pick.taxpayerId, pick.caseId],
    );
    expect(sibling).toBeDefined();
    await caseInState(ctx.dataSource, sibling.id, 'closed_no_change', examiner);
    const after = await detail(pick.caseId);
    expect(after.related?.taxpayerReturns.find((r) => r.returnId === sibling.returnId)).toMatchObject({
      caseId: sibling.id,
      state: 'closed_no_change',
      outcome: 'Records matched the return',
      finishedAt: expect.any(String),
    });
    // A return with no case says so (null case): it was not selected.
    const unselected = d.related?.taxpayerReturns.filter((r) => r.caseId === null) ?? [];
    const [{ n }] = await ctx.dataSource.query(
      `SELECT count(*)::int AS n FROM tax_return r WHERE r.taxpayer_id = $1 AND r.id <> $2 AND NOT EXISTS (SELECT 1 FROM exam_case c WHERE c.return_id = r.id)`,
      [pick.taxpayerId, pick.returnId],
    );
    expect(unselected).toHaveLength(n);
  });

  it("lists the preparer's other cases in the batch, highest priority first, with their count", async () => {
    const [pick] = await ctx.dataSource.query(
      `SELECT c.id, r.preparer_id AS "preparerId", r.batch_id AS "batchId"
         FROM exam_case c JOIN tax_return r ON r.id = c.return_id
        WHERE r.preparer_id IS NOT NULL
        GROUP BY c.id, r.preparer_id, r.batch_id
        ORDER BY (SELECT count(*) FROM exam_case c2 JOIN tax_return r2 ON r2.id = c2.return_id WHERE r2.preparer_id = r.preparer_id AND r2.batch_id = r.batch_id) DESC, c.id
        LIMIT 1`,
    );
    const expected: { id: string }[] = await ctx.dataSource.query(
      `SELECT c.id FROM exam_case c JOIN tax_return r ON r.id = c.return_id
        WHERE r.preparer_id = $1 AND r.batch_id = $2 AND c.id <> $3 ORDER BY c.priority DESC, c.id`,
      [pick.preparerId, pick.batchId, pick.id],
    );
    expect(expected.length).toBeGreaterThanOrEqual(1);
    const d = await detail(pick.id);
    expect(d.related?.preparer?.code).toBe(d.return.preparerCode);
    expect(d.related?.preparer?.total).toBe(expected.length);
    expect(d.related?.preparer?.cases.map((c) => c.caseId)).toEqual(expected.slice(0, PREPARER_CASES_SHOWN).map((e) => e.id));
  });

  it('has no preparer list for a self-prepared return', async () => {
    const [self] = await ctx.dataSource.query(`SELECT c.id FROM exam_case c JOIN tax_return r ON r.id = c.return_id WHERE r.preparer_id IS NULL LIMIT 1`);
    expect(self).toBeDefined();
    expect((await detail(self.id)).related?.preparer).toBeNull();
  });
});

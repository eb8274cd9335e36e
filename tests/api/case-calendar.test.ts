/**
 * The case calendar (issue 13): the assessment deadline on every case (rule:
 * shared/returns/assessment-deadline.ts, worked examples in
 * tests/unit/returns/assessment-deadline.test.ts), the queue's `deadlineWithin` and
 * `sort=deadline`, the Workload count, all by the office clock (server/clock.ts), which the
 * tests move forward instead of waiting.
 */
import { CaseDetailSchema, CaseListSchema, WorkloadSchema } from '../../shared/case-api';
import { addDays } from '../../shared/letters';
import { addYears, daysUntil } from '../../shared/returns/assessment-deadline';
import { advanceClockDays, resetClock, today } from '../../server/clock';
import { refreshDeadlines } from '../../server/cases/case-deadline.repository';
import { fillMissingDeadlines } from '../../server/cases/case-deadline.service';
import { signIn, type SignedIn } from '../helpers/auth';
import { csv, LINES_HEADER, RETURNS_HEADER, upload } from '../helpers/batches';
import { caseInState, openCaseIds } from '../helpers/cases';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(120_000);

describe('assessment deadlines', () => {
  let ctx: TestContext;
  let supervisor: SignedIn;
  let examiner: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'calendar', returns: 300, plantShare: 0.12 });
    supervisor = await signIn(ctx, 'supervisor');
    examiner = await signIn(ctx, 'examiner');
  });
  afterEach(() => resetClock());
  afterAll(async () => {
    await ctx?.close();
  });

  /** Gives a case's return a tax year and filing date, and works its deadline out again. */
  async function setFiling(caseId: string, taxYear: number, filedOn: string | null) {
    await ctx.dataSource.query(`UPDATE tax_return SET tax_year = $2, filed_on = $3 WHERE id = (SELECT return_id FROM exam_case WHERE id = $1)`, [
      caseId,
      taxYear,
      filedOn,
    ]);
    await refreshDeadlines(ctx.dataSource, [caseId]);
  }
  const detail = async (id: string) => {
    const res = await supervisor.agent.get(`/api/cases/${id}`);
    expect(res.status).toBe(200);
    return CaseDetailSchema.parse(res.body);
  };

  it('every scored case has a deadline, counted from the batch date when the file gave no filing date', async () => {
    const rows = await ctx.dataSource.query(`SELECT count(*)::int AS n, count(assess_by)::int AS dated FROM exam_case`);
    expect(rows[0].n).toBeGreaterThan(0);
    expect(rows[0].dated).toBe(rows[0].n);
    const [id] = await openCaseIds(ctx.dataSource, 1);
    const d = await detail(id);
    const ret = (
      await ctx.dataSource.query(
        `SELECT r.tax_year, b.created_at::date::text AS batch_day FROM exam_case c JOIN tax_return r ON r.id = c.return_id JOIN filing_batch b ON b.id = r.batch_id WHERE c.id = $1`,
        [id],
      )
    )[0];
    const due = `${Number(ret.tax_year) + 1}-04-30`;
    const from = ret.batch_day > due ? ret.batch_day : due;
    expect(d.deadline.assessBy).toBe(addYears(from, d.deadline.basis === 'omitted-income' ? 6 : 3));
    expect(d.deadline.daysLeft).toBe(daysUntil(today(), d.deadline.assessBy!));
    expect(d.deadline.caution).toMatch(/local law/);
  });

  it('shows 3 years from a late filing, 6 with much income left out, none without a return; days left follow the clock', async () => {
    const [a, b, c] = await openCaseIds(ctx.dataSource, 3);
    // Tax year 2001 (due 2002-04-30), filed late on 2002-09-02: 3 years → 2005-09-02. (Old years: the
    // fixture's taxpayers have no other return for them.)
    await setFiling(a, 2001, '2002-09-02');
    let d = await detail(a);
    expect(d.deadline).toMatchObject({ assessBy: '2005-09-02', basis: 'standard' });
    const before = d.deadline.daysLeft!;
    advanceClockDays(10);
    d = await detail(a);
    expect(d.deadline.daysLeft).toBe(before - 10);
    resetClock();

    // A wage statement far above the wages the return reported: more than 25 % left out → 6 years.
    const r = (
      await ctx.dataSource.query(
        `SELECT t.tin, r.batch_id, (r.total_wages + r.total_interest + r.total_receipts)::text AS gross FROM exam_case c JOIN tax_return r ON r.id = c.return_id JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`,
        [b],
      )
    )[0];
    await ctx.dataSource.query(`DELETE FROM third_party_statement WHERE tin = $1`, [r.tin]);
    await ctx.dataSource.query(
      `UPDATE tax_return SET total_wages = 40000, total_interest = 0, total_receipts = 0 WHERE id = (SELECT return_id FROM exam_case WHERE id = $1)`,
      [b],
    );
    await ctx.dataSource.query(
      `INSERT INTO third_party_statement (batch_id, tin, tax_year, kind, payer, amount, source_row) VALUES ($1, $2, 2002, 'wages', 'Harbour Works', 50000.01, 2)`,
      [r.batch_id, r.tin],
    );
    await setFiling(b, 2002, '2003-03-01');
    d = await detail(b);
    // Left out 10,000.01 of 40,000 reported (> 25 %): 6 years from the due date 2003-04-30.
    expect(d.deadline).toMatchObject({ assessBy: '2009-04-30', basis: 'omitted-income' });

    await setFiling(c, 2003, null);
    // No filing date on the return: the batch's date counts (a return in a batch was filed).
    d = await detail(c);
    expect(d.deadline.basis).not.toBe('no-return');
    expect(d.deadline.assessBy).not.toBeNull();
  });

  it('filters the queue by deadlineWithin, sorts by deadline soonest first, and counts near deadlines per examiner', async () => {
    const ids = await openCaseIds(ctx.dataSource, 2);
    const t = today();
    // Filed late, so the period runs from the filing date: the deadline falls 20 and 60 days from today.
    const near = addDays(t, 20);
    const mid = addDays(t, 60);
    await setFiling(ids[0], 1998, addYears(near, -3));
    await setFiling(ids[1], 1999, addYears(mid, -3));
    await caseInState(ctx.dataSource, ids[0], 'in_review', examiner);
    await caseInState(ctx.dataSource, ids[1], 'assigned', examiner);

    const within30 = CaseListSchema.parse((await supervisor.agent.get('/api/cases?deadlineWithin=30&state=active')).body);
    expect(within30.items.map((i) => i.id)).toContain(ids[0]);
    expect(within30.items.map((i) => i.id)).not.toContain(ids[1]);
    for (const i of within30.items) expect(i.assessBy! <= addDays(t, 30)).toBe(true);

    const sorted = CaseListSchema.parse((await supervisor.agent.get('/api/cases?sort=deadline&pageSize=50')).body);
    expect(sorted.items[0].id).toBe(ids[0]);
    expect(sorted.items[1].id).toBe(ids[1]);
    const dates = sorted.items.map((i) => i.assessBy ?? '9999-12-31');
    expect([...dates].sort()).toEqual(dates);

    const bad = await supervisor.agent.get('/api/cases?deadlineWithin=soon');
    expect(bad.status).toBe(422);

    const w = WorkloadSchema.parse((await supervisor.agent.get('/api/workload')).body);
    expect(w.examiners.find((e) => e.examinerId === examiner.user.id)!.deadlinesNear).toBe(2);
    // 31 days on, the nearer deadline has passed (still counted: it is inside 90 days, and overdue work needs action).
    advanceClockDays(31);
    const later = CaseListSchema.parse((await supervisor.agent.get('/api/cases?deadlineWithin=30&state=active')).body);
    expect(later.items.map((i) => i.id)).toEqual(expect.arrayContaining([ids[0], ids[1]]));
    const d = CaseDetailSchema.parse((await supervisor.agent.get(`/api/cases/${ids[0]}`)).body);
    expect(d.deadline.daysLeft).toBe(-11);
  });

  it('reads the optional filed_on column of a batch; a file without it stays valid (filing date: the batch date)', async () => {
    const clerk = await signIn(ctx, 'clerk');
    const year = new Date().getUTCFullYear() - 2;
    const withDate = await upload(clerk, {
      returns: {
        name: 'returns.csv',
        content: csv([
          `${RETURNS_HEADER},filed_on`,
          `CAL-FILED-1,987650001,${year},Orla Vantreck,retail,,,,${year + 1}-09-02`,
          `CAL-FILED-2,987650002,${year},Piet Lorrimer,none,,,,`,
        ]),
      },
      line_items: { name: 'line_items.csv', content: csv([LINES_HEADER, 'CAL-FILED-1,inc.wages,41000.00', 'CAL-FILED-2,inc.wages,39000.00']) },
    });
    expect(withDate.status).toBe(201);
    const old = await upload(clerk, {
      returns: { name: 'returns.csv', content: csv([RETURNS_HEADER, `CAL-OLD-1,987650003,${year},Quin Ashdown,none,,,`]) },
      line_items: { name: 'line_items.csv', content: csv([LINES_HEADER, 'CAL-OLD-1,inc.wages,30000.00']) },
    });
    expect(old.status).toBe(201);
    const rows = await ctx.dataSource.query(`SELECT return_ref, filed_on::text AS filed_on FROM tax_return WHERE return_ref LIKE 'CAL-%' ORDER BY return_ref`);
    expect(rows).toEqual([
      { return_ref: 'CAL-FILED-1', filed_on: `${year + 1}-09-02` },
      { return_ref: 'CAL-FILED-2', filed_on: null },
      { return_ref: 'CAL-OLD-1', filed_on: null },
    ]);
    const bad = await upload(clerk, {
      returns: { name: 'returns.csv', content: csv([`${RETURNS_HEADER},filed_on`, `CAL-BAD-1,987650004,${year},Rhea Tolland,none,,,,${year}-12-31`]) },
      line_items: { name: 'line_items.csv', content: csv([LINES_HEADER, 'CAL-BAD-1,inc.wages,30000.00']) },
    });
    expect(bad.status).toBe(422);
    expect(JSON.stringify(bad.body.errors)).toContain(`is within tax year ${year}: a return is filed after its tax year ends`);
  });

  it('works out at start-up the deadlines of cases opened before they were kept', async () => {
    await ctx.dataSource.query(`UPDATE exam_case SET assess_by = NULL, assess_basis = NULL WHERE id IN (SELECT id FROM exam_case ORDER BY id LIMIT 5)`);
    expect(await fillMissingDeadlines(ctx.dataSource)).toBe(5);
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM exam_case WHERE assess_basis IS NULL`))[0].n).toBe(0);
    expect(await fillMissingDeadlines(ctx.dataSource)).toBe(0);
  });
});

/**
 * The queue and one case through the real API on a real scored batch: listing, sorting,
 * filtering, search, paging, the case detail with its breakdown, the masked and revealed
 * TIN, and what each read writes to the access log.
 */
import { CASE_STATES } from '../../shared/cases';
import { CaseDetailSchema, CaseListSchema, RevealedTinSchema, type CaseListItem } from '../../shared/case-api';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInState, openCaseIds } from '../helpers/cases';
import { loadScoredBatch, type LoadedBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(120_000);

describe('the examination queue (GET /api/cases)', () => {
  let ctx: TestContext;
  let batch: LoadedBatch;
  let examiner: SignedIn;
  let examiner2: SignedIn;
  let supervisor: SignedIn;
  let caseCount: number;

  beforeAll(async () => {
    ctx = await createTestContext();
    batch = await loadScoredBatch(ctx.dataSource, { seed: 'cases-api', returns: 400, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
    examiner2 = await signIn(ctx, 'examiner');
    supervisor = await signIn(ctx, 'supervisor');
    caseCount = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM exam_case`))[0].n;
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const list = async (who: SignedIn, query: string) => {
    const res = await who.agent.get(`/api/cases${query}`);
    if (res.status !== 200) throw new Error(`GET /api/cases${query}: ${res.status} ${JSON.stringify(res.body)}`);
    return CaseListSchema.parse(res.body);
  };
  const all = async (who: SignedIn, query = '') => (await list(who, `?pageSize=100${query ? `&${query}` : ''}`)).items;

  it('has cases to work with (the scored batch opened some)', () => {
    expect(caseCount).toBeGreaterThanOrEqual(20);
    expect(caseCount).toBeLessThanOrEqual(100);
  });

  it('lists by priority, highest first, with the count and paging of docs/design.md#api-contract', async () => {
    const p1 = await list(examiner, '?pageSize=10');
    expect(p1).toMatchObject({ total: caseCount, page: 1, pageSize: 10 });
    expect(p1.items).toHaveLength(10);
    const pr = p1.items.map((i) => i.priority);
    expect(pr).toEqual([...pr].sort((a, b) => b - a));
    const p2 = await list(examiner, '?pageSize=10&page=2');
    expect(p2.items[0].priority).toBeLessThanOrEqual(pr[9]);
    expect(new Set([...p1.items, ...p2.items].map((i) => i.id)).size).toBe(10 + p2.items.length);
    // The pages together are the whole queue, each case once.
    const pages = Math.ceil(caseCount / 10);
    const ids: string[] = [];
    for (let p = 1; p <= pages; p++) ids.push(...(await list(examiner, `?pageSize=10&page=${p}`)).items.map((i) => i.id));
    expect(new Set(ids).size).toBe(caseCount);
    expect((await list(examiner, `?pageSize=10&page=${pages + 1}`)).items).toEqual([]);
  });

  it('sorts by risk score and by age, highest first', async () => {
    const byScore = await all(examiner, 'sort=score');
    const s = byScore.map((i) => i.riskScore);
    expect(s).toEqual([...s].sort((a, b) => b - a));
    // Age: the oldest case first. Give two cases distinct ages to see it.
    const [a, b] = byScore.slice(-2).map((i) => i.id);
    await ctx.dataSource.query(`UPDATE exam_case SET opened_at = now() - interval '40 days' WHERE id = $1`, [a]);
    await ctx.dataSource.query(`UPDATE exam_case SET opened_at = now() - interval '20 days' WHERE id = $1`, [b]);
    const byAge = await all(examiner, 'sort=age');
    expect(byAge.slice(0, 2).map((i) => i.id)).toEqual([a, b]);
    const t = byAge.map((i) => Date.parse(i.openedAt));
    expect(t).toEqual([...t].sort((x, y) => x - y));
  });

  it('gives each item the fields the queue shows, with a masked TIN and money as decimal text', async () => {
    const [item] = (await list(examiner, '?pageSize=1')).items;
    expect(item.maskedTin).toMatch(/^••• ••• \d{3}$/);
    expect(item.amountAtStake).toMatch(/^\d+\.\d{2}$/);
    expect(item.state).toBe('open');
    expect(item.assignee).toBeNull();
    expect(batch.returnIdOf.has(item.returnRef)).toBe(true);
    const tin = (await ctx.dataSource.query(`SELECT t.tin FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [item.id]))[0].tin;
    expect(JSON.stringify(await list(examiner, '?pageSize=100'))).not.toContain(String(tin));
  });

  it('filters by state, assignee, batch, tax year and activity', async () => {
    const ids = await openCaseIds(ctx.dataSource, 4);
    await caseInState(ctx.dataSource, ids[0], 'assigned', examiner);
    await caseInState(ctx.dataSource, ids[1], 'in_review', examiner);
    await caseInState(ctx.dataSource, ids[2], 'assigned', examiner2);

    const mine = await all(examiner, 'assignee=me');
    expect(mine.map((i) => i.id).sort()).toEqual([ids[0], ids[1]].sort());
    expect(mine.every((i) => i.assigneeName === 'Test examiner')).toBe(true);
    expect((await all(supervisor, `assignee=${examiner2.user.id}`)).map((i) => i.id)).toEqual([ids[2]]);
    const none = await all(examiner, 'assignee=none');
    expect(none).toHaveLength(caseCount - 3);
    expect(none.every((i) => i.assignee === null)).toBe(true);

    expect((await all(examiner, 'state=in_review')).map((i) => i.id)).toEqual([ids[1]]);
    expect((await all(examiner, 'state=assigned,in_review')).map((i) => i.id).sort()).toEqual([ids[0], ids[1], ids[2]].sort());
    expect(await all(examiner, 'state=active')).toHaveLength(caseCount);
    expect(await all(examiner, 'state=finished')).toHaveLength(0);
    expect((await list(examiner, '?state=all')).total).toBe(caseCount);

    expect((await list(examiner, `?batch=${batch.batchId}`)).total).toBe(caseCount);
    expect((await list(examiner, '?batch=00000000-0000-4000-8000-000000000000')).total).toBe(0);

    const years = (await ctx.dataSource.query(
      `SELECT r.tax_year AS y, count(*)::int AS n FROM exam_case c JOIN tax_return r ON r.id = c.return_id GROUP BY 1 ORDER BY 2 DESC`,
    )) as { y: number; n: number }[];
    const byYear = await list(examiner, `?taxYear=${years[0].y}&pageSize=100`);
    expect(byYear.total).toBe(years[0].n);
    expect(byYear.items.every((i) => i.taxYear === years[0].y)).toBe(true);

    const acts = (await ctx.dataSource.query(
      `SELECT t.activity_code AS a, count(*)::int AS n FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id GROUP BY 1 ORDER BY 2 DESC`,
    )) as { a: string; n: number }[];
    const byAct = await list(examiner, `?activity=${acts[0].a}&pageSize=100`);
    expect(byAct.total).toBe(acts[0].n);
    expect(byAct.items.every((i) => i.activityCode === acts[0].a)).toBe(true);
    // Filters combine.
    const both = await list(examiner, `?activity=${acts[0].a}&taxYear=${years[0].y}&pageSize=100`);
    expect(both.items.every((i) => i.activityCode === acts[0].a && i.taxYear === years[0].y)).toBe(true);
  });

  it('finds a case by return reference (prefix, any case) or by the full TIN', async () => {
    const [item] = (await list(examiner, '?pageSize=1&sort=score')).items;
    const byRef = await list(examiner, `?q=${encodeURIComponent(item.returnRef.toLowerCase())}`);
    expect(byRef.items.map((i) => i.id)).toContain(item.id);
    expect(byRef.items.every((i) => i.returnRef.toUpperCase().startsWith(item.returnRef.toUpperCase()))).toBe(true);
    const tin = String((await ctx.dataSource.query(`SELECT t.tin FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [item.id]))[0].tin);
    const byTin = await list(examiner, `?q=${tin}`);
    expect(byTin.items.map((i) => i.id)).toContain(item.id);
    expect(byTin.items.every((i: CaseListItem) => i.maskedTin.endsWith(tin.slice(-3)))).toBe(true);
    expect((await list(examiner, '?q=NO-SUCH-REF')).total).toBe(0);
    // LIKE wildcards are taken literally.
    expect((await list(examiner, '?q=%25')).total).toBe(0);
  });

  it('refuses a bad query with every problem named (422)', async () => {
    const res = await examiner.agent.get('/api/cases?state=shelved&sort=size&pageSize=1000&assignee=someone&taxYear=19');
    expect(res.status).toBe(422);
    expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['assignee', 'pageSize', 'sort', 'state', 'taxYear']);
    expect(res.body.issues.find((i: { path: string }) => i.path === 'state').message).toMatch(/^Unknown case state "shelved"; use open, assigned/);
  });

  it('writes one access-log line per case shown, with the taxpayer, in one page listing', async () => {
    const before = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM access_log WHERE user_id = $1`, [examiner2.user.id]))[0].n;
    const page = await list(examiner2, '?pageSize=7');
    const rows = await ctx.dataSource.query(
      `SELECT action, route, record_type, record_id, taxpayer_id, taxpayer_label FROM access_log WHERE user_id = $1 ORDER BY id OFFSET $2`,
      [examiner2.user.id, before],
    );
    expect(rows).toHaveLength(7);
    expect(rows.map((r: { record_id: string }) => r.record_id)).toEqual(page.items.map((i) => i.id));
    for (const [k, r] of rows.entries()) {
      expect(r).toMatchObject({ action: 'view', route: 'GET /api/cases', record_type: 'case', taxpayer_label: page.items[k].maskedTin });
      expect(r.taxpayer_id).toMatch(/^[0-9a-f-]{36}$/);
    }
  });

  it('keeps the queue from clerks and administrators (403) and from anonymous callers (401)', async () => {
    const clerk = await signIn(ctx, 'clerk');
    const admin = await signIn(ctx, 'admin');
    expect((await clerk.agent.get('/api/cases')).status).toBe(403);
    expect((await admin.agent.get('/api/cases')).status).toBe(403);
    expect((await admin.agent.get('/api/cases/export.xlsx')).status).toBe(403);
    const anon = await import('supertest').then((m) => m.default(ctx.app).get('/api/cases'));
    expect(anon.status).toBe(401);
  });

  describe('one case (GET /api/cases/:id)', () => {
    it('shows the return, its lines, the breakdown with evidence and the preparer pool, logged as a view', async () => {
      // The highest open case the score selected: a case of the run's random review sample
      // (drawn afresh each run) may top the queue, and its history says so instead.
      const top = (await list(examiner, '?pageSize=50&state=open')).items.find((c) => c.selection === 'score')!;
      expect(top).toBeDefined();
      const res = await examiner.agent.get(`/api/cases/${top.id}`);
      expect(res.status).toBe(200);
      const d = CaseDetailSchema.parse(res.body);
      expect(d).toMatchObject({ id: top.id, riskScore: top.riskScore, amountAtStake: top.amountAtStake });
      expect(d.return.returnRef).toBe(top.returnRef);
      expect(d.taxpayer.maskedTin).toBe(top.maskedTin);
      const full = String((await ctx.dataSource.query(`SELECT tin FROM taxpayer WHERE id = $1`, [d.taxpayer.id]))[0].tin);
      expect(JSON.stringify(res.body)).not.toContain(full);
      const lines = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM line_item WHERE return_id = $1`, [d.return.id]))[0].n;
      expect(d.lineItems).toHaveLength(lines);
      expect(d.lineItems.map((l) => l.lineNo)).toEqual([...Array(lines).keys()].map((k) => k + 1));
      const b = d.score.breakdown;
      expect(b.components.length).toBeGreaterThan(0);
      expect(b.components.some((c) => c.points > 0 && c.evidence.length > 0)).toBe(true);
      expect(b.digits.firstDigitCounts).toHaveLength(9);
      // The score is the components' points, summed and capped at 100 (one decimal).
      expect(
        Math.abs(
          Math.min(
            100,
            b.components.reduce((s, c) => s + c.points, 0),
          ) - d.riskScore,
        ),
      ).toBeLessThan(0.06);
      expect(d.history[0]).toMatchObject({ kind: 'opened', toState: 'open' });
      expect(d.history[0].summary).toMatch(/^Opened by scoring/);
      expect(d.notes).toEqual([]);
      expect(d.letters).toEqual([]);
      expect(d.actions).toEqual({ canAct: false, claim: true, assign: false, transitions: [], note: false, revealTin: false, reopen: false });
      const log = await ctx.dataSource.query(
        `SELECT action, route, taxpayer_id, taxpayer_label FROM access_log WHERE user_id = $1 AND record_id = $2 AND route LIKE 'GET /api/cases/%'`,
        [examiner.user.id, top.id],
      );
      expect(log).toEqual([{ action: 'view', route: `GET /api/cases/${top.id}`, taxpayer_id: d.taxpayer.id, taxpayer_label: top.maskedTin }]);
    });

    it('carries the preparer pool digits when the return has a preparer', async () => {
      const withPreparer = (
        await ctx.dataSource.query(`SELECT c.id FROM exam_case c JOIN tax_return r ON r.id = c.return_id WHERE r.preparer_id IS NOT NULL LIMIT 1`)
      )[0];
      const d = CaseDetailSchema.parse((await examiner.agent.get(`/api/cases/${withPreparer.id}`)).body);
      expect(d.return.preparerCode).toMatch(/\S/);
      expect(d.score.breakdown.preparerPool?.firstDigitCounts).toHaveLength(9);
    });

    it('answers 404 for an unknown or malformed id', async () => {
      expect((await examiner.agent.get('/api/cases/00000000-0000-4000-8000-000000000000')).status).toBe(404);
      expect((await examiner.agent.get('/api/cases/not-a-case')).body).toEqual({ error: 'No such case.' });
    });

    it('offers the actions of the caller and the state', async () => {
      const [id] = await openCaseIds(ctx.dataSource, 1);
      const sup = CaseDetailSchema.parse((await supervisor.agent.get(`/api/cases/${id}`)).body);
      expect(sup.actions).toEqual({ canAct: true, claim: true, assign: true, transitions: [], note: true, revealTin: true, reopen: false });
      await caseInState(ctx.dataSource, id, 'assigned', examiner);
      const own = CaseDetailSchema.parse((await examiner.agent.get(`/api/cases/${id}`)).body);
      expect(own.actions).toEqual({
        canAct: true,
        claim: false,
        assign: false,
        transitions: [
          { to: 'in_review', label: 'Start the review' },
          { to: 'open', label: 'Release to the queue' },
        ],
        note: true,
        revealTin: true,
        reopen: false,
      });
      const other = CaseDetailSchema.parse((await examiner2.agent.get(`/api/cases/${id}`)).body);
      expect(other.actions).toMatchObject({ canAct: false, claim: false, transitions: [], note: false });
      expect(other.assignee).toEqual({ id: examiner.user.id, name: 'Test examiner' });
      await examiner.agent.post(`/api/cases/${id}/transition`).set('X-CSRF-Token', examiner.csrf).send({ to: 'in_review' }).expect(200);
      const review = CaseDetailSchema.parse((await examiner.agent.get(`/api/cases/${id}`)).body);
      // Document requests and referrals are the letters feature's actions, not plain moves.
      expect(review.actions.transitions.map((t) => t.to)).toEqual(['closed_no_change', 'closed_adjusted']);
      expect(review.history.map((h) => h.kind)).toEqual(['opened', 'claimed', 'transition']);
      expect(review.history[2].summary).toBe('Test examiner moved the case from assigned to in review');
    });

    it('reveals the full TIN only to whoever may act on the case, logged as reveal-tin', async () => {
      const [id] = await openCaseIds(ctx.dataSource, 1);
      const csrf = (s: SignedIn) => s.csrf;
      const refused = await examiner.agent.post(`/api/cases/${id}/reveal-tin`).set('X-CSRF-Token', csrf(examiner));
      expect(refused.status).toBe(403);
      expect(refused.body.error).toBe('Claim this case before working on it.');
      await caseInState(ctx.dataSource, id, 'assigned', examiner);
      const res = await examiner.agent.post(`/api/cases/${id}/reveal-tin`).set('X-CSRF-Token', csrf(examiner));
      expect(res.status).toBe(200);
      const { tin } = RevealedTinSchema.parse(res.body);
      const row = (await ctx.dataSource.query(`SELECT t.tin, t.id FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [id]))[0];
      expect(tin).toBe(String(row.tin));
      const log = await ctx.dataSource.query(`SELECT action, taxpayer_id, taxpayer_label FROM access_log WHERE record_id = $1 AND action = 'reveal-tin'`, [id]);
      expect(log).toEqual([{ action: 'reveal-tin', taxpayer_id: row.id, taxpayer_label: `••• ••• ${tin.slice(-3)}` }]);
      expect((await examiner2.agent.post(`/api/cases/${id}/reveal-tin`).set('X-CSRF-Token', examiner2.csrf)).status).toBe(403);
      expect((await supervisor.agent.post(`/api/cases/${id}/reveal-tin`).set('X-CSRF-Token', supervisor.csrf)).status).toBe(200);
    });

    it("lists the letters kept with the case (from the letters feature's table)", async () => {
      const [id] = await openCaseIds(ctx.dataSource, 1);
      const present = (await ctx.dataSource.query(`SELECT to_regclass('public.letter') IS NOT NULL AS p`))[0].p;
      if (present) {
        await ctx.dataSource.query(
          `INSERT INTO letter (case_id, kind, file_name, pdf, size, sha256, recipient, subject) VALUES ($1, 'document_request', 'request.pdf', '\\x25504446', 4, repeat('a', 64), 'taxpayer@example.invalid', 'Records for your return')`,
          [id],
        );
      }
      const d = CaseDetailSchema.parse((await examiner.agent.get(`/api/cases/${id}`)).body);
      expect(d.letters.map((l) => l.kind)).toEqual(present ? ['document_request'] : []);
    });

    it('reads every state back in the detail', async () => {
      const ids = await openCaseIds(ctx.dataSource, CASE_STATES.length);
      for (const [k, state] of CASE_STATES.entries()) {
        await caseInState(ctx.dataSource, ids[k], state, examiner2);
        const d = CaseDetailSchema.parse((await examiner2.agent.get(`/api/cases/${ids[k]}`)).body);
        expect({ state, got: d.state }).toEqual({ state, got: state });
        if (state === 'closed_adjusted') expect(d).toMatchObject({ adjustedAmount: '1250.00', outcome: 'Receipts overstated' });
        if (state === 'awaiting_reply') expect(d.dueDate).toBe('2099-01-31');
        if (['referred', 'closed_no_change', 'closed_adjusted'].includes(state)) expect(d.closedAt).not.toBeNull();
      }
    });
  });
});

/**
 * The examiner's start (issue 14) through the real API on a real scored batch: search by
 * reference, TIN or taxpayer name across every state with finished cases marked; the
 * "Needs me" counts (a taxpayer's reply through the real reply link, a case handed over by a
 * supervisor, a request that ran out, a deadline near) and the queue filter behind each, each
 * cleared when the case's examiner opens the case; saved views kept per person and there again
 * after signing in afresh.
 */
import request from 'supertest';
import { CaseDetailSchema, CaseListSchema, NeedsMeSchema, NEEDS_DEADLINE_DAYS } from '../../shared/case-api';
import { addDays } from '../../shared/letters';
import { MAX_SAVED_VIEWS, SavedViewListSchema, SavedViewSchema } from '../../shared/saved-views';
import { endReplyWait } from '../../server/cases/case-workflow';
import { today } from '../../server/clock';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInState, openCaseIds } from '../helpers/cases';
import { dueIn, uniqueAddress } from '../helpers/letter-cases';
import { waitForMail } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(120_000);

const PDF = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n');

describe('my cases, search and saved views', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  let other: SignedIn;
  let supervisor: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'my-cases', returns: 400, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
    other = await signIn(ctx, 'examiner');
    supervisor = await signIn(ctx, 'supervisor');
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const list = async (who: SignedIn, query: string) => {
    const res = await who.agent.get(`/api/cases?pageSize=100&${query}`);
    if (res.status !== 200) throw new Error(`GET /api/cases?${query}: ${res.status} ${JSON.stringify(res.body)}`);
    return CaseListSchema.parse(res.body);
  };
  const needs = async (who: SignedIn) => {
    const res = await who.agent.get('/api/needs-me');
    expect(res.status).toBe(200);
    return NeedsMeSchema.parse(res.body);
  };
  const open = async (who: SignedIn, id: string) => {
    const res = await who.agent.get(`/api/cases/${id}`);
    expect(res.status).toBe(200);
    return CaseDetailSchema.parse(res.body);
  };

  describe('search across every state', () => {
    let closedId: string;
    let ref: string;
    let tin: string;
    let name: string;

    beforeAll(async () => {
      closedId = await caseInState(ctx.dataSource, (await openCaseIds(ctx.dataSource, 1))[0], 'closed_no_change', examiner);
      [{ ref, tin, name }] = await ctx.dataSource.query(
        `SELECT r.return_ref AS ref, t.tin, t.name FROM exam_case c JOIN tax_return r ON r.id = c.return_id JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`,
        [closedId],
      );
    });

    it('finds a finished case by part of the taxpayer name, in any case, and marks it finished', async () => {
      const surname = name.split(' ').at(-1)!;
      const found = await list(supervisor, `q=${encodeURIComponent(surname.toLowerCase())}`);
      const hit = found.items.find((i) => i.id === closedId);
      expect(hit).toMatchObject({ state: 'closed_no_change', finished: true, taxpayerName: name });
      // Every item found carries the name part; active ones are not marked finished.
      for (const i of found.items) {
        expect(i.taxpayerName.toLowerCase()).toContain(surname.toLowerCase());
        expect(i.finished).toBe(['referred', 'closed_no_change', 'closed_adjusted'].includes(i.state));
      }
    });

    it('finds it by its reference and by the full TIN; a chosen state still narrows the search', async () => {
      expect((await list(examiner, `q=${encodeURIComponent(ref.toLowerCase())}`)).items.map((i) => i.id)).toContain(closedId);
      expect((await list(examiner, `q=${tin}`)).items.map((i) => i.id)).toContain(closedId);
      expect((await list(examiner, `q=${encodeURIComponent(name)}&state=active`)).items.map((i) => i.id)).not.toContain(closedId);
      expect((await list(examiner, `q=${encodeURIComponent(name)}&state=finished`)).items.map((i) => i.id)).toContain(closedId);
    });

    it('treats % and _ in a search as letters, not wildcards', async () => {
      expect((await list(examiner, 'q=%25')).total).toBe(0);
      expect((await list(examiner, 'q=_')).total).toBe(0);
    });
  });

  describe('needs me', () => {
    it('starts at nothing for a new examiner', async () => {
      expect(await needs(other)).toEqual({ reply: 0, expired: 0, deadline: 0, handed: 0 });
    });

    it('flags a taxpayer reply on the queue row and the case until the examiner opens it', async () => {
      const [caseId] = await openCaseIds(ctx.dataSource, 1);
      await caseInState(ctx.dataSource, caseId, 'in_review', examiner);
      const to = uniqueAddress();
      const sent = await examiner.agent
        .post(`/api/cases/${caseId}/document-requests`)
        .set('X-CSRF-Token', examiner.csrf)
        .send({ items: ['Receipts for the vehicle expenses claimed'], dueDate: dueIn(21), email: to });
      expect(sent.status).toBe(201);
      const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec((await waitForMail(to)).text ?? '')![1];
      const before = await needs(examiner);
      const reply = await request(ctx.app).post(`/api/replies/${token}`).attach('files', PDF, { filename: 'receipts.pdf', contentType: 'application/pdf' });
      expect(reply.status).toBe(201);

      expect(await needs(examiner)).toEqual({ ...before, reply: before.reply + 1 });
      const flagged = await list(examiner, 'needs=reply');
      expect(flagged.items.map((i) => i.id)).toEqual([caseId]);
      expect(flagged.items[0].replyUnread).toBe(true);
      expect((await list(examiner, 'assignee=me')).items.find((i) => i.id === caseId)?.replyUnread).toBe(true);

      // A supervisor's look shows the flag and leaves it for the examiner.
      expect((await open(supervisor, caseId)).replyUnreadSince).toEqual(expect.any(String));
      expect((await needs(examiner)).reply).toBe(before.reply + 1);

      // The examiner's own opening tells them once, then clears it everywhere.
      expect((await open(examiner, caseId)).replyUnreadSince).toEqual(expect.any(String));
      expect((await open(examiner, caseId)).replyUnreadSince).toBeNull();
      expect((await needs(examiner)).reply).toBe(before.reply);
      expect((await list(examiner, 'needs=reply')).items).toEqual([]);
      expect((await list(examiner, 'assignee=me')).items.find((i) => i.id === caseId)?.replyUnread).toBe(false);
    });

    it('counts a case a supervisor gives them until they open it, and not one they claimed', async () => {
      const [given, claimed] = await openCaseIds(ctx.dataSource, 2);
      const res = await supervisor.agent.post(`/api/cases/${given}/assign`).set('X-CSRF-Token', supervisor.csrf).send({ assigneeId: other.user.id });
      expect(res.status).toBe(200);
      expect((await other.agent.post(`/api/cases/${claimed}/claim`).set('X-CSRF-Token', other.csrf)).status).toBe(200);
      expect(await needs(other)).toMatchObject({ handed: 1 });
      expect((await list(other, 'needs=handed')).items.map((i) => i.id)).toEqual([given]);
      await open(other, given);
      expect(await needs(other)).toMatchObject({ handed: 0 });
    });

    it('counts a request that ran out until the examiner opens the case', async () => {
      const [caseId] = await openCaseIds(ctx.dataSource, 1);
      await caseInState(ctx.dataSource, caseId, 'awaiting_reply', other);
      await open(other, caseId);
      // What the daily pass writes when a due date passes (server/housekeeping).
      await ctx.dataSource.transaction((m) => endReplyWait(m, caseId, 'reply-overdue', { dueDate: '2099-01-31' }, true));
      expect(await needs(other)).toMatchObject({ expired: 1 });
      expect((await list(other, 'needs=expired')).items.map((i) => i.id)).toEqual([caseId]);
      await open(other, caseId);
      expect(await needs(other)).toMatchObject({ expired: 0 });
    });

    it('writes nothing when the examiner opens a case again with nothing new on it, and notes an opening after news', async () => {
      const [caseId] = await openCaseIds(ctx.dataSource, 1);
      await caseInState(ctx.dataSource, caseId, 'in_review', other);
      const seenAt = async (): Promise<{ seen: Date; xmin: string }> =>
        (await ctx.dataSource.query(`SELECT assignee_seen_at AS seen, xmin::text FROM case_attention WHERE case_id = $1`, [caseId]))[0];
      await open(other, caseId);
      const first = await seenAt();
      expect(first.seen).toBeInstanceOf(Date);
      // A quiet case: the row keeps its version, so nothing was written (xmin is the id of the
      // transaction that wrote the row: PostgreSQL documentation, "System Columns").
      await open(other, caseId);
      expect(await seenAt()).toEqual(first);
      // A case event after the last opening (a request that ran out) is news: the next opening notes it.
      await ctx.dataSource.transaction((m) => endReplyWait(m, caseId, 'reply-overdue', { dueDate: '2099-01-31' }, false));
      await open(other, caseId);
      expect((await seenAt()).seen.getTime()).toBeGreaterThan(first.seen.getTime());
    });

    it(`counts their cases whose assessment deadline is within ${NEEDS_DEADLINE_DAYS} days, not others'`, async () => {
      const mine = (await list(other, 'assignee=me')).items.map((i) => i.id);
      expect(mine.length).toBeGreaterThanOrEqual(2);
      await ctx.dataSource.query(`UPDATE exam_case SET assess_by = $2::date WHERE id = ANY($1::uuid[])`, [mine, addDays(today(), 400)]);
      await ctx.dataSource.query(`UPDATE exam_case SET assess_by = $2::date WHERE id = $1`, [mine[0], addDays(today(), NEEDS_DEADLINE_DAYS)]);
      await ctx.dataSource.query(`UPDATE exam_case SET assess_by = $2::date WHERE id = $1`, [mine[1], addDays(today(), NEEDS_DEADLINE_DAYS + 1)]);
      expect(await needs(other)).toMatchObject({ deadline: 1 });
      expect((await list(other, 'needs=deadline')).items.map((i) => i.id)).toEqual([mine[0]]);
      expect((await list(examiner, 'needs=deadline')).items.map((i) => i.id)).not.toContain(mine[0]);
    });

    it('refuses an unknown reason with the allowed ones', async () => {
      const res = await examiner.agent.get('/api/cases?needs=soon');
      expect(res.status).toBe(422);
      expect(JSON.stringify(res.body)).toContain('needs');
    });
  });

  describe('saved views', () => {
    const save = (who: SignedIn, body: object) => who.agent.post('/api/saved-views').set('X-CSRF-Token', who.csrf).send(body);
    const views = async (agent: request.Agent) => {
      const res = await agent.get('/api/saved-views');
      expect(res.status).toBe(200);
      return SavedViewListSchema.parse(res.body).items;
    };

    it('keeps a view for its owner only, and it is there after signing in again', async () => {
      const filters = { state: 'awaiting_reply', sort: 'deadline', assignee: 'me', deadlineWithin: 90 };
      const res = await save(examiner, { name: '  Waiting, deadline soon ', filters });
      expect(res.status).toBe(201);
      const view = SavedViewSchema.parse(res.body);
      expect(view).toMatchObject({ name: 'Waiting, deadline soon', filters });

      expect(await views(other.agent)).toEqual([]);
      const again = request.agent(ctx.app);
      expect((await again.post('/api/auth/login').send({ username: examiner.user.username, password: examiner.password })).status).toBe(200);
      expect(await views(again)).toEqual([view]);

      // The filters it keeps are ones the queue itself accepts.
      const { assignee: _a, ...queryable } = filters;
      const qs = new URLSearchParams(Object.entries(queryable).map(([k, v]) => [k, String(v)])).toString();
      expect((await examiner.agent.get(`/api/cases?${qs}&assignee=me`)).status).toBe(200);
    });

    it('refuses a second view of the same name (any case), bad filters with their path, and more than the limit', async () => {
      const dup = await save(examiner, { name: 'WAITING, DEADLINE SOON', filters: {} });
      expect(dup.status).toBe(409);
      expect(dup.body.error).toMatch(/already have a view called/);

      const bad = await save(examiner, { name: 'Odd', filters: { state: 'lost', sort: 'size', colour: 'red' } });
      expect(bad.status).toBe(422);
      const text = JSON.stringify(bad.body);
      for (const part of ['filters.state', 'filters.sort', 'colour']) expect(text).toContain(part);
      expect((await save(examiner, { name: '', filters: {} })).status).toBe(422);

      const have = (await views(examiner.agent)).length;
      for (let i = have; i < MAX_SAVED_VIEWS; i++) expect((await save(examiner, { name: `View ${i}`, filters: { sort: 'age' } })).status).toBe(201);
      const over = await save(examiner, { name: 'One too many', filters: {} });
      expect(over.status).toBe(422);
      expect(over.body.error).toMatch(/delete one/);
      expect(await views(examiner.agent)).toHaveLength(MAX_SAVED_VIEWS);
    });

    it("deletes the owner's view and no one else's, logging both changes", async () => {
      const [first] = await views(examiner.agent);
      expect((await other.agent.delete(`/api/saved-views/${first.id}`).set('X-CSRF-Token', other.csrf)).status).toBe(404);
      expect((await examiner.agent.delete('/api/saved-views/not-a-view').set('X-CSRF-Token', examiner.csrf)).status).toBe(404);
      expect((await examiner.agent.delete(`/api/saved-views/${first.id}`).set('X-CSRF-Token', examiner.csrf)).status).toBe(204);
      expect((await views(examiner.agent)).map((v) => v.id)).not.toContain(first.id);
      const log = await ctx.dataSource.query(`SELECT action, detail FROM access_log WHERE record_type = 'saved_view' AND record_id = $1 ORDER BY id`, [
        first.id,
      ]);
      expect(log).toEqual([
        { action: 'change', detail: `saved view "${first.name}"` },
        { action: 'change', detail: 'deleted saved view' },
      ]);
    });
  });
});

/**
 * Hand-over (issue 13): a supervisor gives a case that is not finished to another examiner in
 * any state. The case keeps its state, its letters and the taxpayer's reply link; the history
 * says who handed it to whom; the reply then reaches the new examiner.
 */
import { randomBytes } from 'node:crypto';
import request from 'supertest';
import { BulkReassignResultSchema, CaseDetailSchema, CaseListSchema } from '../../shared/case-api';
import { LetterListSchema } from '../../shared/letters';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { waitForMail } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(120_000);

const PDF = Buffer.concat([Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\n'), randomBytes(1500), Buffer.from('\n%%EOF\n')]);

describe('handing a case over', () => {
  let ctx: TestContext;
  let supervisor: SignedIn;
  let ivo: SignedIn;
  let nell: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'handover', returns: 200, plantShare: 0.12 });
    supervisor = await signIn(ctx, 'supervisor');
    ivo = await signIn(ctx, 'examiner');
    nell = await signIn(ctx, 'examiner');
    await ctx.dataSource.query(`UPDATE app_user SET display_name = 'Ivo Brackley' WHERE id = $1`, [ivo.user.id]);
    await ctx.dataSource.query(`UPDATE app_user SET display_name = 'Nell Quarrender' WHERE id = $1`, [nell.user.id]);
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const post = (who: SignedIn, path: string, body: object) => who.agent.post(path).set('X-CSRF-Token', who.csrf).send(body);
  const detail = async (who: SignedIn, id: string) => CaseDetailSchema.parse((await who.agent.get(`/api/cases/${id}`)).body);

  it('hands over an awaiting-reply case: state, letter and link kept; the reply reaches the new examiner', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, ivo);
    const to = uniqueAddress();
    const sent = await post(ivo, `/api/cases/${caseId}/document-requests`, {
      items: ['Bank statements for the business account'],
      dueDate: dueIn(21),
      email: to,
    });
    expect(sent.status).toBe(201);
    const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec((await waitForMail(to)).text ?? '')![1];

    expect((await detail(supervisor, caseId)).actions.assign).toBe(true);
    const res = await post(supervisor, `/api/cases/${caseId}/assign`, { assigneeId: nell.user.id });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ id: caseId, state: 'awaiting_reply', assignee: nell.user.id });

    const d = await detail(nell, caseId);
    expect(d.state).toBe('awaiting_reply');
    expect(d.assignee).toEqual({ id: nell.user.id, name: 'Nell Quarrender' });
    expect(d.history.at(-1)).toMatchObject({
      kind: 'handed-over',
      fromState: 'awaiting_reply',
      toState: 'awaiting_reply',
      summary: 'Test supervisor handed the case over from Ivo Brackley to Nell Quarrender; it stays awaiting reply',
    });
    expect(d.actions.canAct).toBe(true);
    // The letter stays with the case.
    const letters = LetterListSchema.parse((await nell.agent.get(`/api/cases/${caseId}/letters`)).body);
    expect(letters.items.map((l) => [l.kind, l.documentRequest?.state])).toEqual([['document_request', 'sent']]);
    // Ivo no longer acts on it.
    expect((await post(ivo, `/api/cases/${caseId}/notes`, { text: 'still mine?' })).status).toBe(403);

    // The taxpayer's link still works, and the reply lands with Nell.
    expect((await request(ctx.app).get(`/api/replies/${token}`)).status).toBe(200);
    const reply = await request(ctx.app)
      .post(`/api/replies/${token}`)
      .field('complete', 'true')
      .attach('files', PDF, { filename: 'statements.pdf', contentType: 'application/pdf' });
    expect(reply.status).toBe(201);
    const mine = CaseListSchema.parse((await nell.agent.get('/api/cases?assignee=me&state=in_review')).body);
    expect(mine.items.map((i) => i.id)).toContain(caseId);
    const after = await detail(nell, caseId);
    expect(after.state).toBe('in_review');
    expect(after.history.at(-1)!.summary).toMatch(/^The taxpayer replied through the reply link \(1 file\); the case is back in review/);
    expect((await post(nell, `/api/cases/${caseId}/notes`, { text: 'Reply read; statements match.' })).status).toBe(201);
  });

  it('bulk reassign hands over cases in review the same way, and refuses finished ones', async () => {
    const a = (await caseInReview(ctx.dataSource, ivo)).caseId;
    const b = (await caseInReview(ctx.dataSource, ivo)).caseId;
    expect((await post(ivo, `/api/cases/${b}/transition`, { to: 'closed_no_change', outcome: 'Records matched the return' })).status).toBe(200);
    const r = BulkReassignResultSchema.parse((await post(supervisor, '/api/cases/reassign', { caseIds: [a, b], assigneeId: nell.user.id })).body);
    expect(r.moved).toEqual([a]);
    expect(r.refused).toEqual([{ id: b, reason: 'A finished case cannot be given to an examiner; this one is closed, no change.' }]);
    const d = await detail(supervisor, a);
    expect(d.state).toBe('in_review');
    expect(d.history.at(-1)!.summary).toBe('Test supervisor handed the case over from Ivo Brackley to Nell Quarrender; it stays in review');
  });
});

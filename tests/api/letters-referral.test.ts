/**
 * Referral memos (issue 7): a PDF with the case facts (TIN masked), the score breakdown
 * (points and evidence), the digit chart, the notes and the case history, kept with the
 * case; the case moves to referred with the unit and summary as its outcome.
 */
import request from 'supertest';
import { SCREENING_CAUTION } from '../../shared/cautions';
import type { ScoreBreakdown } from '../../shared/scoring/breakdown';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { pdfText } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(60_000);

const SUMMARY = 'Reported income is well below the wages and interest reported by third parties for the same year; the taxpayer has not yet replied.';

describe('referral memos', () => {
  let ctx: TestContext;
  let examiner: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'referrals', returns: 200, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx.close();
  });

  const refer = (who: SignedIn, caseId: string, body: object) => who.agent.post(`/api/cases/${caseId}/referral`).set('X-CSRF-Token', who.csrf).send(body);

  it('previews the memo as text before referring: facts, masked TIN, every component; nothing stored, the case stays where it is', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const before = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM letter WHERE case_id = $1`, [caseId]))[0].n;
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/referral/preview`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ unit: 'income-matching', summary: SUMMARY });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ kind: 'referral_memo', to: null, subject: expect.stringMatching(/^Referral memo: .+, for the Cross-Check Team$/) });
    const facts = (
      await ctx.dataSource.query(
        `SELECT t.tin, t.name, r.return_ref, s.breakdown FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id JOIN tax_return r ON r.id = c.return_id JOIN return_score s ON s.id = c.score_id WHERE c.id = $1`,
        [caseId],
      )
    )[0];
    const text = res.body.text as string;
    expect(text).toContain('RM-(given on referring)');
    expect(text).toContain(SUMMARY);
    expect(text).toContain(facts.name);
    expect(text).toContain(facts.return_ref);
    expect(text).toContain(`••• ••• ${String(facts.tin).slice(-3)}`);
    expect(text).not.toContain(String(facts.tin));
    expect(text).toContain(SCREENING_CAUTION);
    for (const c of (facts.breakdown as ScoreBreakdown).components) expect(text).toContain(`- ${c.label}: ${c.points.toFixed(1)}.`);
    // Nothing written, nothing moved; the look is in the access log.
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM letter WHERE case_id = $1`, [caseId]))[0].n).toBe(before);
    expect((await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [caseId]))[0].state).toBe('in_review');
    const logged = await ctx.dataSource.query(`SELECT detail FROM access_log WHERE record_id = $1 AND detail = 'referral_memo preview'`, [caseId]);
    expect(logged).toHaveLength(1);
  });

  it('writes the memo with facts, masked TIN, score breakdown, digit chart and notes, and refers the case', async () => {
    const { caseId, taxpayerId } = await caseInReview(ctx.dataSource, examiner);
    await ctx.dataSource.query(`INSERT INTO case_note (case_id, author_id, text) VALUES ($1, $2, $3)`, [
      caseId,
      examiner.user.id,
      'Spoke with the preparer; the wage statement from Harrow Mills was not on the return.',
    ]);
    const res = await refer(examiner, caseId, { unit: 'income-matching', summary: SUMMARY });
    expect(res.status).toBe(201);
    expect(res.body.caseState).toBe('referred');
    expect(res.body.letter).toMatchObject({ kind: 'referral_memo', recipient: 'Cross-Check Team', documentRequest: null, createdBy: { id: examiner.user.id } });

    const c = (await ctx.dataSource.query(`SELECT state, outcome, closed_at FROM exam_case WHERE id = $1`, [caseId]))[0];
    expect(c.state).toBe('referred');
    expect(c.outcome).toBe(`Referred to the Cross-Check Team: ${SUMMARY}`);
    expect(c.closed_at).not.toBeNull();
    const ev = await ctx.dataSource.query(`SELECT from_state, to_state, detail FROM case_event WHERE case_id = $1 AND kind = 'referral'`, [caseId]);
    expect(ev).toEqual([
      { from_state: 'in_review', to_state: 'referred', detail: expect.objectContaining({ letterId: res.body.letter.id, unit: 'income-matching' }) },
    ]);

    const pdf = await examiner.agent.get(`/api/cases/${caseId}/letters/${res.body.letter.id}/pdf`).buffer(true).parse(bufferBody);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    const text = pdfText(pdf.body as Buffer);

    const facts = (
      await ctx.dataSource.query(
        `SELECT t.tin, t.name, r.return_ref, r.tax_year, s.breakdown, c.risk_score::text AS score FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id JOIN tax_return r ON r.id = c.return_id JOIN return_score s ON s.id = c.score_id WHERE c.id = $1`,
        [caseId],
      )
    )[0];
    expect(facts.tin).toBeTruthy();
    // Case facts, with the TIN masked and never in full.
    expect(text).toContain('Referral memo');
    expect(text).toContain('Cross-Check Team');
    expect(text).toContain(facts.name);
    expect(text).toContain(facts.return_ref);
    expect(text).toContain(`••• ••• ${String(facts.tin).slice(-3)}`);
    expect(text).not.toContain(String(facts.tin));
    expect(text).toContain(SUMMARY);
    // The caution, in full.
    expect(text).toContain(SCREENING_CAUTION);
    // The score breakdown: every component with its points and (the start of) its evidence.
    const b = facts.breakdown as ScoreBreakdown;
    expect(text).toContain(`${facts.score} of 100`);
    expect(text).toContain('Score breakdown');
    for (const comp of b.components) {
      expect(text).toContain(comp.label);
      expect(text).toContain(comp.points.toFixed(1));
      const firstWords = comp.evidence.split(/\s+/).slice(0, 3).join(' ');
      if (firstWords) expect({ comp: comp.key, has: text.includes(firstWords) }).toEqual({ comp: comp.key, has: true });
    }
    // The digit chart's legend and caption, and the notes and history.
    expect(text).toContain('Expected (Benford)');
    expect(text).toContain(`Observed (n = ${b.digits.n})`);
    expect(text).toContain('Spoke with the preparer; the wage statement from Harrow Mills was not on the return.');
    expect(text).toContain('Claimed');
    expect(text).toContain('Moved (from assigned to in review)');

    // The whole memo was logged when it was opened.
    const log = await ctx.dataSource.query(`SELECT action, record_type, taxpayer_id FROM access_log WHERE user_id = $1 AND record_type = 'letter'`, [
      examiner.user.id,
    ]);
    expect(log).toEqual([{ action: 'view', record_type: 'letter', taxpayer_id: taxpayerId }]);
  });

  it('refers a case awaiting a reply, and refuses a finished case', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const sent = await examiner.agent
      .post(`/api/cases/${caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ['Receipts for 2024'], dueDate: dueIn(), email: uniqueAddress() });
    expect(sent.status).toBe(201);
    const res = await refer(examiner, caseId, { summary: SUMMARY });
    expect(res.status).toBe(201);
    expect(res.body.letter.recipient).toBe('Ledger Visit Team');
    const list = await examiner.agent.get(`/api/cases/${caseId}/letters`);
    expect(list.body.items.map((l: { kind: string }) => l.kind)).toEqual(['referral_memo', 'document_request']);
    // The memo's history shows the request that went before it.
    const pdf = await examiner.agent.get(`/api/cases/${caseId}/letters/${res.body.letter.id}/pdf`).buffer(true).parse(bufferBody);
    expect(pdfText(pdf.body as Buffer)).toContain('Document request sent (from in review to awaiting reply)');

    const again = await refer(examiner, caseId, { summary: SUMMARY });
    expect(again.status).toBe(409);
    expect(again.body.error).toBe('A case can be referred while it is in review or awaiting a reply; this case is referred.');
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM letter WHERE case_id = $1 AND kind = 'referral_memo'`, [caseId]))[0].n).toBe(1);
  });

  it('checks the body and who may refer', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const short = await refer(examiner, caseId, { summary: 'Too short' });
    expect(short.status).toBe(422);
    expect(short.body.issues.map((i: { path: string }) => i.path)).toEqual(['summary']);
    expect((await refer(examiner, caseId, { unit: 'the-moon', summary: SUMMARY })).body.issues.map((i: { path: string }) => i.path)).toEqual(['unit']);
    const other = await signIn(ctx, 'examiner');
    expect((await refer(other, caseId, { summary: SUMMARY })).status).toBe(403);
    expect((await request(ctx.app).post(`/api/cases/${caseId}/referral`).send({ summary: SUMMARY })).status).toBe(401);
    // A case not yet in review cannot be referred.
    const open = (await ctx.dataSource.query(`SELECT id FROM exam_case WHERE state = 'open' LIMIT 1`))[0].id;
    const supervisor = await signIn(ctx, 'supervisor');
    const early = await refer(supervisor, open, { summary: SUMMARY });
    expect(early.status).toBe(409);
    expect(await ctx.dataSource.query(`SELECT id FROM letter WHERE case_id = $1`, [open])).toEqual([]);
  });
});

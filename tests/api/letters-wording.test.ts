/**
 * The wording of each document Plumbline produces (docs/design.md#cautions and
 * docs/design.md#letters-and-replies), read back the way a person reads it (PDF through
 * poppler's pdftotext): the document request carries no flagged word (no score, digit,
 * pattern, risk or suspicion) in its PDF or its mail; the referral memo carries the short
 * caution in full, says "licensed professional practice", and names the unit by the
 * product's own name. No document calls typical figures "honest". The queue export's
 * caution is checked in tests/api/cases-export.test.ts.
 */
import { SCREENING_CAUTION } from '../../shared/cautions';
import { flaggedLetterWords, REFERRAL_UNIT_LABELS } from '../../shared/letters';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { attachment, pdfText, waitForMail } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import type request from 'supertest';

jest.setTimeout(90_000);

const binary = (res: request.Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};

describe('wording of the documents', () => {
  let ctx: TestContext;
  let examiner: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'letter-wording', returns: 120, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('the document request (mail, PDF as sent, office copy) names no score, test, pattern or suspicion', async () => {
    const to = uniqueAddress('wording');
    const { caseId } = await caseInReview(ctx.dataSource, examiner, to);
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ['Receipts for the vehicle expenses claimed', 'Payslips from each employer'], dueDate: dueIn(21) });
    expect(res.status).toBe(201);
    expect(res.body.warnings).toEqual([]);

    const mail = await waitForMail(to, 30_000);
    const pdf = (mail.attachments ?? []).find((a) => a.contentType === 'application/pdf');
    expect(pdf).toBeDefined();
    const sentText = pdfText(await attachment(mail, pdf!.generatedFileName));
    const office = await examiner.agent.get(`/api/cases/${caseId}/letters/${res.body.letter.id}/pdf`).buffer(true).parse(binary);
    expect(office.status).toBe(200);
    const officeText = pdfText(office.body as Buffer);

    for (const [what, text] of [
      ['mail subject', mail.subject ?? ''],
      ['mail text', mail.text ?? ''],
      ['PDF as sent', sentText],
      ['office copy', officeText],
    ] as const) {
      expect({ what, flagged: flaggedLetterWords(text) }).toEqual({ what, flagged: [] });
      expect({ what, honest: /honest/i.test(text) }).toEqual({ what, honest: false });
    }
    expect(sentText).toContain('This is a request for records, not a decision');
  });

  it('an item with flagged words is sent all the same, and the answer names it (a soft check)', async () => {
    const to = uniqueAddress('wording-flagged');
    const { caseId } = await caseInReview(ctx.dataSource, examiner, to);
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ['Payslips from each employer', 'Receipts behind the risky pattern of round amounts'], dueDate: dueIn(21) });
    expect(res.status).toBe(201);
    expect(res.body.caseState).toBe('awaiting_reply');
    expect(res.body.warnings).toEqual([{ item: 1, words: ['risk', 'pattern'] }]);
  });

  it("the referral memo carries the short caution in full, licensed professional practice, and the unit's own name", async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/referral`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ unit: 'special-investigations', summary: 'The receipts do not cover the expenses claimed; the unit should look at the whole year.' });
    expect(res.status).toBe(201);
    expect(res.body.letter.recipient).toBe(REFERRAL_UNIT_LABELS['special-investigations']);
    const pdf = await examiner.agent.get(`/api/cases/${caseId}/letters/${res.body.letter.id}/pdf`).buffer(true).parse(binary);
    expect(pdf.status).toBe(200);
    const text = pdfText(pdf.body as Buffer);
    expect(text).toContain(SCREENING_CAUTION);
    expect(SCREENING_CAUTION).toContain("The office's own law, procedure and licensed professional practice come first.");
    // The closing line of the memo says it again in its own sentence.
    expect(text).toContain("The office's own law, procedure and licensed professional practice come first; this memo records why the case was selected");
    expect(text).toContain(REFERRAL_UNIT_LABELS['special-investigations']);
    expect(text).not.toMatch(/honest/i);
    expect(text).not.toMatch(/\b(Field Audit|Income Matching|Special Investigations) Unit\b/);
  });
});

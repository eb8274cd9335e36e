/**
 * The wording of each document Plumbline produces (docs/design.md#cautions and
 * docs/design.md#letters-and-replies), read back the way a person reads it (PDF through
 * poppler's pdftotext): the document request carries no flagged word (no score, digit,
 * pattern, risk or suspicion) in its PDF or its mail; the referral memo carries the short
 * caution in full, says "licensed professional practice", and names the unit by the
 * product's own name. No document calls typical figures "honest". The letters of issue 13
 * (reminder, acknowledgement, no-change letter, adjustment proposal) carry no flagged word
 * either, and say what they must: the proposal sets as filed, as corrected and the difference
 * side by side, with 30 days to answer and the office's rights wording (a setting). The queue
 * export's caution is checked in tests/api/cases-export.test.ts.
 */
import { SCREENING_CAUTION } from '../../shared/cautions';
import { addDays, flaggedLetterWords, longDate, REFERRAL_UNIT_LABELS } from '../../shared/letters';
import { applyCorrections } from '../../shared/returns/corrections';
import type { LineCode } from '../../shared/returns/line-codes';
import { money } from '../../shared/scoring/format';
import { today } from '../../server/clock';
import { DEFAULT_PROPOSAL_RIGHTS } from '../../server/letters/pdf/closing-letters-pdf';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { attachment, mailTo, pdfText, waitForMail, type MailMessage } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import request from 'supertest';
import { bufferBody } from '../helpers/download';

jest.setTimeout(90_000);

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
    const office = await examiner.agent.get(`/api/cases/${caseId}/letters/${res.body.letter.id}/pdf`).buffer(true).parse(bufferBody);
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
    const pdf = await examiner.agent.get(`/api/cases/${caseId}/letters/${res.body.letter.id}/pdf`).buffer(true).parse(bufferBody);
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

  /**
   * Waits for a mail to `to` whose subject matches; returns it with its PDF's text. As long as
   * waitForMail's wait (tests/helpers/maildev.ts), and a failed MailDev list counts as "not yet".
   */
  async function letterMail(to: string, subject: RegExp): Promise<{ mail: MailMessage; text: string }> {
    const until = Date.now() + 60_000;
    for (;;) {
      const mail = (await mailTo(to).catch(() => [])).find((m) => subject.test(m.subject));
      if (mail) {
        const pdf = (mail.attachments ?? []).find((a) => a.contentType === 'application/pdf');
        expect(pdf).toBeDefined();
        return { mail, text: pdfText(await attachment(mail, pdf!.generatedFileName)) };
      }
      if (Date.now() > until) throw new Error(`no mail "${subject}" to ${to}`);
      await new Promise((r) => setTimeout(r, 200));
    }
  }

  /** No flagged word and no "honest" in any part of a letter. */
  function plainWords(mail: MailMessage, pdf: string, office: string) {
    for (const [what, text] of [
      ['mail subject', mail.subject ?? ''],
      ['mail text', mail.text ?? ''],
      ['PDF as sent', pdf],
      ['office copy', office],
    ] as const) {
      expect({ what, flagged: flaggedLetterWords(text) }).toEqual({ what, flagged: [] });
      expect({ what, honest: /honest/i.test(text) }).toEqual({ what, honest: false });
    }
  }

  const officeCopy = async (caseId: string, kind: string) => {
    const list = await examiner.agent.get(`/api/cases/${caseId}/letters`);
    const letter = list.body.items.find((l: { kind: string }) => l.kind === kind);
    expect(letter).toBeDefined();
    const pdf = await examiner.agent.get(`/api/cases/${caseId}/letters/${letter.id}/pdf`).buffer(true).parse(bufferBody);
    expect(pdf.status).toBe(200);
    return { letter, text: pdfText(pdf.body as Buffer) };
  };

  const PDF = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\n%%EOF\n');

  it('the reminder and the acknowledgement of each send name no score, test, pattern or suspicion', async () => {
    const to = uniqueAddress('wording-ack');
    const { caseId } = await caseInReview(ctx.dataSource, examiner, to);
    const sent = await examiner.agent
      .post(`/api/cases/${caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ['Bank statements for March'], dueDate: dueIn(7) });
    expect(sent.status).toBe(201);
    const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec((await waitForMail(to, 30_000)).text ?? '')![1];

    const supervisor = await signIn(ctx, 'supervisor');
    expect((await supervisor.agent.post('/api/housekeeping/run').set('X-CSRF-Token', supervisor.csrf)).status).toBe(200);
    const reminder = await letterMail(to, /^Reminder/);
    plainWords(reminder.mail, reminder.text, (await officeCopy(caseId, 'reminder')).text);
    const fresh = /\/reply\/([A-Za-z0-9_-]{43})/.exec(reminder.mail.text ?? '')![1];
    expect(fresh).not.toBe(token);

    const up = await request(ctx.app).post(`/api/replies/${fresh}`).attach('files', PDF, { filename: 'march.pdf', contentType: 'application/pdf' });
    expect(up.status).toBe(201);
    const ack = await letterMail(to, /^Records received/);
    plainWords(ack.mail, ack.text, (await officeCopy(caseId, 'acknowledgement')).text);
    expect(ack.text).toContain('march.pdf');
    expect(ack.text).toContain('It is not a decision about your return.');
  });

  it('the no-change letter says the return stands as filed, in plain words', async () => {
    const to = uniqueAddress('wording-nc');
    const { caseId } = await caseInReview(ctx.dataSource, examiner, to);
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/transition`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ to: 'closed_no_change', outcome: 'Records seen; nothing to change.' });
    expect(res.status).toBe(200);
    const { mail, text } = await letterMail(to, /^Review finished: no change/);
    const office = await officeCopy(caseId, 'no_change');
    expect(office.letter.recipient).toBe(to);
    plainWords(mail, text, office.text);
    expect(text).toContain('We are making no change to it: the return stands as you filed it.');
    expect(text).toContain('A review does not mean that anything was wrong');
    // The examiner's own outcome words are for the office, not for the letter.
    expect(text).not.toContain('Records seen; nothing to change.');
  });

  it('the adjustment proposal sets as filed, as corrected and the difference side by side, with 30 days and the rights wording', async () => {
    const to = uniqueAddress('wording-ap');
    const { caseId } = await caseInReview(ctx.dataSource, examiner, to);
    const lines: { code: LineCode; cents: string }[] = await ctx.dataSource.query(
      `SELECT li.line_code AS code, (li.amount * 100)::bigint::text AS cents FROM exam_case c JOIN line_item li ON li.return_id = c.return_id WHERE c.id = $1`,
      [caseId],
    );
    const wages = lines.filter((l) => l.code === 'inc.wages').reduce((s, l) => s + Number(l.cents), 0);
    const corrections = [
      { lineCode: 'inc.wages' as const, amount: ((wages + 5_000_000) / 100).toFixed(2) },
      { lineCode: 'ded.charity' as const, amount: '0' },
    ];
    // The expected figures by the shared rules (their worked examples: tests/unit/returns/corrections.test.ts).
    const expected = applyCorrections(
      lines.map((l) => ({ code: l.code, cents: Number(l.cents) })),
      corrections,
    );
    const rights = 'If you disagree, write to the Examinations Section within the time given; a colleague who did not work on your return reads every answer.';
    process.env.PROPOSAL_RIGHTS_TEXT = rights;
    let res;
    try {
      res = await examiner.agent
        .post(`/api/cases/${caseId}/transition`)
        .set('X-CSRF-Token', examiner.csrf)
        .send({ to: 'closed_adjusted', outcome: 'Wages from a second employer were left out.', corrections });
    } finally {
      delete process.env.PROPOSAL_RIGHTS_TEXT;
    }
    expect(res.status).toBe(200);
    const { mail, text } = await letterMail(to, /^Proposed change to your/);
    const office = await officeCopy(caseId, 'adjustment_proposal');
    plainWords(mail, text, office.text);
    expect(text).toMatch(/As filed As corrected Difference/);
    expect(text).toContain(`Tax ${money(expected.filed.tax)} ${money(expected.corrected.tax)} +${money(expected.taxDifference)}`);
    expect(text).toContain(`instead of ${money(expected.filed.tax)}: ${money(expected.taxDifference)} more.`);
    expect(text).toContain(`Please answer by ${longDate(addDays(today(), 30))}, 30 days from the date of this letter.`);
    expect(text).toContain(rights);
    expect(text).not.toContain(DEFAULT_PROPOSAL_RIGHTS.slice(0, 40));
    const row = (await ctx.dataSource.query(`SELECT adjusted_amount FROM exam_case WHERE id = $1`, [caseId]))[0];
    expect(Math.round(Number(row.adjusted_amount) * 100)).toBe(expected.taxDifference);
  });

  it('the proposal carries the neutral rights wording by default, and a rights setting with flagged words is refused', async () => {
    const to = uniqueAddress('wording-ap2');
    const { caseId } = await caseInReview(ctx.dataSource, examiner, to);
    const body = { to: 'closed_adjusted', outcome: 'Wages corrected.', corrections: [{ lineCode: 'inc.wages', amount: '9999999.00' }] };
    process.env.PROPOSAL_RIGHTS_TEXT = 'Disagree and a penalty may follow.';
    let refused;
    try {
      refused = await examiner.agent.post(`/api/cases/${caseId}/transition`).set('X-CSRF-Token', examiner.csrf).send(body);
    } finally {
      delete process.env.PROPOSAL_RIGHTS_TEXT;
    }
    expect(refused.status).toBe(500);
    expect((await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [caseId]))[0].state).toBe('in_review');
    const ok = await examiner.agent.post(`/api/cases/${caseId}/transition`).set('X-CSRF-Token', examiner.csrf).send(body);
    expect(ok.status).toBe(200);
    const { text } = await letterMail(to, /^Proposed change to your/);
    expect(text).toContain(DEFAULT_PROPOSAL_RIGHTS);
  });
});

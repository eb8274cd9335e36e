/**
 * Issue 17: a random review case's letters are word for word those of a case the score
 * selected. The same document request is sent on one case of each kind; mail subject, mail
 * text and the PDF as sent are compared once each case's own particulars (taxpayer's name and
 * address, return reference, tax year, reply link, dates and references) are set aside.
 */
import { signIn, type SignedIn } from '../helpers/auth';
import { dueIn, sessionUserOf, uniqueAddress } from '../helpers/letter-cases';
import { attachment, pdfText, waitForMail } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { claimCase, moveCase } from '../../server/cases/case-workflow';

jest.setTimeout(120_000);

describe('letters of random review cases', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'programme-letters', returns: 200, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx?.close();
  });

  async function send(selection: 'score' | 'random') {
    const ds = ctx.dataSource;
    const row = (
      await ds.query(
        `SELECT c.id, c.taxpayer_id, t.name, r.return_ref, r.tax_year FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id JOIN tax_return r ON r.id = c.return_id
          WHERE c.selection = $1 AND c.state = 'open' ORDER BY c.id LIMIT 1`,
        [selection],
      )
    )[0];
    const to = uniqueAddress(`programme-${selection}`);
    const actor = sessionUserOf(examiner);
    await claimCase(ds, { actor, route: `POST /api/cases/${row.id}/claim` }, row.id);
    await ds.transaction((m) => moveCase(m, { actor, route: `POST /api/cases/${row.id}/transition` }, row.id, 'in_review'));
    await ds.query(`UPDATE taxpayer SET email = $2, postal_address = '1 Mill Lane, Aldermere' WHERE id = $1`, [row.taxpayer_id, to]);
    const res = await examiner.agent
      .post(`/api/cases/${row.id}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ['Receipts for the vehicle expenses claimed', 'Payslips from each employer'], dueDate: dueIn(21) });
    expect(res.status).toBe(201);
    const mail = await waitForMail(to, 30_000);
    const pdf = (mail.attachments ?? []).find((a) => a.contentType === 'application/pdf')!;
    const own = (s: string) =>
      s
        .split(row.name)
        .join('<taxpayer>')
        .split(row.return_ref)
        .join('<return>')
        .split(String(row.tax_year))
        .join('<year>')
        .split(to)
        .join('<email>')
        .replace(/https?:\/\/\S+/g, '<link>')
        .replace(/\b[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\b/gi, '<id>')
        .replace(/\b[A-Z]{2,}-[0-9A-Z-]{4,}\b/g, '<ref>')
        .replace(/\s+/g, ' ')
        .trim();
    return { subject: own(mail.subject ?? ''), text: own(mail.text ?? ''), pdf: own(pdfText(await attachment(mail, pdf.generatedFileName))) };
  }

  it('mail subject, mail text and PDF are the same words for a random case as for a selected one', async () => {
    const selected = await send('score');
    const random = await send('random');
    expect(random.subject).toBe(selected.subject);
    expect(random.text).toBe(selected.text);
    expect(random.pdf).toBe(selected.pdf);
    expect(random.text.length).toBeGreaterThan(200);
    expect(`${random.text} ${random.pdf}`).not.toMatch(/random/i);
  });
});

/**
 * Document requests (issue 7): the letter is made as a PDF, mailed through the test MailDev
 * with the PDF attached, kept with the case, and the case moves to awaiting reply. The PDF
 * is read back with pdftotext. A refused send leaves nothing behind.
 */
import { createHash } from 'node:crypto';
import request from 'supertest';
import { addDays, isoToday, longDate } from '../../shared/letters';
import { createApp } from '../../server/app';
import { createMailer } from '../../server/mail/mailer';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { attachment, mailTo, pdfText, waitForMail } from '../helpers/maildev';
import { freePort } from '../helpers/processes';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(60_000);

const ITEMS = ['Receipts for the vehicle expenses claimed for 2024', 'Bank statements for the business account, January to December 2024'];

describe('document requests', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  let examiner2: SignedIn;
  let supervisor: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'letters', returns: 200, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
    examiner2 = await signIn(ctx, 'examiner');
    supervisor = await signIn(ctx, 'supervisor');
  });
  afterAll(async () => {
    await ctx.close();
  });

  const send = (who: SignedIn, caseId: string, body: object) =>
    who.agent.post(`/api/cases/${caseId}/document-requests`).set('X-CSRF-Token', who.csrf).send(body);

  it('mails the letter with its PDF, keeps it with the case and moves the case to awaiting reply', async () => {
    const to = uniqueAddress();
    const { caseId, taxpayerId } = await caseInReview(ctx.dataSource, examiner, uniqueAddress('on-file'));
    const dueDate = dueIn(30);
    const res = await send(examiner, caseId, { items: ITEMS, dueDate, email: to });
    expect(res.status).toBe(201);
    expect(res.body.caseState).toBe('awaiting_reply');
    expect(res.body.letter).toMatchObject({
      kind: 'document_request',
      recipient: to,
      caseId,
      documentRequest: { items: ITEMS, dueDate, state: 'sent', uploads: [] },
    });

    // The mail: to the given address, from the office, with the PDF attached.
    const mail = await waitForMail(to);
    expect(mail.subject).toMatch(/^Request for records: your \d{4} income-tax return$/);
    expect(mail.from[0].address).toBe('examinations@revenue.aldermere.example');
    expect(mail.text).toContain(longDate(dueDate));
    const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec(mail.text ?? '')?.[1];
    expect(token).toBeDefined();
    const pdfs = (mail.attachments ?? []).filter((a) => a.contentType === 'application/pdf');
    expect(pdfs).toHaveLength(1);
    expect(pdfs[0].filename).toMatch(/^request-for-records-DR-[0-9A-F]{8}\.pdf$/);
    const sent = await attachment(mail, pdfs[0].generatedFileName);
    expect(sent.subarray(0, 5).toString('latin1')).toBe('%PDF-');

    // The PDF says what is asked, by when, how to answer, whom to ask, and that it decides nothing.
    const text = pdfText(sent);
    const name: string = (await ctx.dataSource.query(`SELECT name FROM taxpayer WHERE id = $1`, [taxpayerId]))[0].name;
    expect(text).toContain(`Dear ${name},`);
    expect(text).toMatch(/We are reviewing your \d{4} income-tax return and would like to see the records listed below/);
    for (const item of ITEMS) expect(text).toContain(item);
    expect(text).toContain(`By ${longDate(dueDate)}`);
    expect(text).toContain(`/reply/${token}`);
    expect(text).toContain('This is a request for records, not a decision');
    expect(text).toContain('Aldermere Revenue Office');
    expect(text).toContain('+44 1632 960 418');
    expect(text).toContain('Test examiner');
    // …and nothing that reads as suspicion or names the screening.
    for (const word of [/risk/i, /score/i, /digit/i, /benford/i, /suspic/i, /fraud/i, /penalt/i, /evasion/i, /irregular/i])
      expect({ word: String(word), found: word.test(text) }).toEqual({ word: String(word), found: false });

    // Kept with the case: the office copy has the link masked; the mailed copy's hash is on record.
    const row = (await ctx.dataSource.query(`SELECT sha256, sent_sha256, recipient, message_id FROM letter WHERE case_id = $1`, [caseId]))[0];
    expect(row.sent_sha256).toBe(createHash('sha256').update(sent).digest('hex'));
    expect(row.message_id).toBe(mail.headers['message-id']);
    const list = await examiner.agent.get(`/api/cases/${caseId}/letters`);
    expect(list.status).toBe(200);
    expect(list.body.items).toHaveLength(1);
    const pdf = await examiner.agent.get(`/api/cases/${caseId}/letters/${res.body.letter.id}/pdf`).buffer(true).parse(bufferBody);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    const office = pdf.body as Buffer;
    expect(createHash('sha256').update(office).digest('hex')).toBe(row.sha256);
    const officeText = pdfText(office);
    expect(officeText).toContain(`By ${longDate(dueDate)}`);
    expect(officeText).toContain('sent to the taxpayer only');
    expect(officeText).not.toContain(token);

    // Only the token's hash is stored.
    const req = (await ctx.dataSource.query(`SELECT token_hash, state, email, due_date::text AS due FROM document_request WHERE case_id = $1`, [caseId]))[0];
    expect(req).toEqual({ token_hash: createHash('sha256').update(token!).digest('hex'), state: 'sent', email: to, due: dueDate });

    // The case moved through the workflow, with its event, due date and access-log line.
    const c = (await ctx.dataSource.query(`SELECT state, due_date::text AS due FROM exam_case WHERE id = $1`, [caseId]))[0];
    expect(c).toEqual({ state: 'awaiting_reply', due: dueDate });
    const ev = await ctx.dataSource.query(
      `SELECT kind, from_state, to_state, actor_id, detail FROM case_event WHERE case_id = $1 AND kind = 'document-request'`,
      [caseId],
    );
    expect(ev).toHaveLength(1);
    expect(ev[0]).toMatchObject({
      from_state: 'in_review',
      to_state: 'awaiting_reply',
      actor_id: examiner.user.id,
      detail: { letterId: res.body.letter.id, dueDate },
    });
    const log = await ctx.dataSource.query(`SELECT action, route, detail FROM access_log WHERE record_id = $1 AND user_id = $2 ORDER BY id`, [
      caseId,
      examiner.user.id,
    ]);
    expect(log).toEqual(
      expect.arrayContaining([
        { action: 'change', route: `POST /api/cases/${caseId}/document-requests`, detail: 'in_review → awaiting_reply' },
        { action: 'view', route: `GET /api/cases/${caseId}/letters`, detail: 'letters' },
      ]),
    );
  });

  it('uses the address on file when no e-mail is given', async () => {
    const onFile = uniqueAddress('on-file');
    const { caseId } = await caseInReview(ctx.dataSource, examiner, onFile);
    const res = await send(examiner, caseId, { items: ['Invoices issued to customers in 2024'], dueDate: dueIn(14), email: '' });
    expect(res.status).toBe(201);
    expect(res.body.letter.recipient).toBe(onFile);
    const mail = await waitForMail(onFile);
    expect(mail.attachments?.[0]?.contentType).toBe('application/pdf');
  });

  it('asks for an address when the taxpayer has none on file, and sends nothing', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner, null);
    const res = await send(examiner, caseId, { items: ITEMS, dueDate: dueIn() });
    expect(res.status).toBe(422);
    expect(res.body.error).toBe('This taxpayer has no e-mail address on file. Enter the address the request should go to.');
    expect(res.body.issues).toEqual([{ path: 'email', message: expect.any(String) }]);
    expect(await ctx.dataSource.query(`SELECT id FROM letter WHERE case_id = $1`, [caseId])).toEqual([]);
    expect((await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [caseId]))[0].state).toBe('in_review');
  });

  it('checks the items, the due date window and the address', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const issuesOf = async (body: object) => {
      const res = await send(examiner, caseId, body);
      expect(res.status).toBe(422);
      return (res.body.issues as { path: string; message: string }[]).map((i) => i.path);
    };
    expect(await issuesOf({ items: [], dueDate: dueIn() })).toEqual(['items']);
    expect(await issuesOf({ items: ['  '], dueDate: dueIn() })).toEqual(['items.0']);
    expect(await issuesOf({ items: ITEMS })).toEqual(['dueDate']);
    expect(await issuesOf({ items: ITEMS, dueDate: addDays(isoToday(), -1) })).toEqual(['dueDate']);
    expect(await issuesOf({ items: ITEMS, dueDate: isoToday() })).toEqual(['dueDate']);
    expect(await issuesOf({ items: ITEMS, dueDate: addDays(isoToday(), 6) })).toEqual(['dueDate']);
    expect(await issuesOf({ items: ITEMS, dueDate: addDays(isoToday(), 91) })).toEqual(['dueDate']);
    expect(await issuesOf({ items: ITEMS, dueDate: '2026-02-30' })).toEqual(['dueDate']);
    expect(await issuesOf({ items: ITEMS, dueDate: '31/12/2026' })).toEqual(['dueDate']);
    expect(await issuesOf({ items: ITEMS, dueDate: dueIn(), email: 'not-an-address' })).toEqual(['email']);
    expect(await issuesOf({ items: Array.from({ length: 13 }, (_, i) => `Record number ${i + 1}`), dueDate: dueIn() })).toEqual(['items']);
    const tooSoon = await send(examiner, caseId, { items: ITEMS, dueDate: addDays(isoToday(), 2) });
    expect(tooSoon.body.issues[0].message).toContain(longDate(addDays(isoToday(), 7)));
    // The edges of the window are allowed.
    expect((await send(examiner, caseId, { items: ITEMS, dueDate: addDays(isoToday(), 90), email: uniqueAddress() })).status).toBe(201);
  });

  it("lets only the case's examiner or a supervisor send, and only while the case is in review", async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const other = await send(examiner2, caseId, { items: ITEMS, dueDate: dueIn(), email: uniqueAddress() });
    expect(other.status).toBe(403);
    expect(other.body.error).toBe('This case is assigned to another examiner.');
    const clerk = await signIn(ctx, 'clerk');
    expect((await send(clerk, caseId, { items: ITEMS, dueDate: dueIn() })).status).toBe(403);
    expect((await request(ctx.app).post(`/api/cases/${caseId}/document-requests`).send({ items: ITEMS, dueDate: dueIn() })).status).toBe(401);

    const to = uniqueAddress();
    const bySupervisor = await send(supervisor, caseId, { items: ITEMS, dueDate: dueIn(), email: to });
    expect(bySupervisor.status).toBe(201);
    expect(bySupervisor.body.letter.createdBy).toEqual({ id: supervisor.user.id, displayName: 'Test supervisor' });
    // Read at once: another test file starting now may empty the shared inbox.
    await waitForMail(to);

    // Awaiting reply now: a second request is refused and sends no mail.
    const again = await send(examiner, caseId, { items: ITEMS, dueDate: dueIn(), email: to });
    expect(again.status).toBe(409);
    expect(again.body.error).toBe('A document request can be sent only while the case is in review; this case is awaiting reply.');
    expect((await mailTo(to)).length).toBeLessThanOrEqual(1);
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM letter WHERE case_id = $1`, [caseId]))[0].n).toBe(1);

    expect((await send(examiner, '00000000-0000-4000-8000-000000000000', { items: ITEMS, dueDate: dueIn() })).status).toBe(404);
    expect((await send(examiner, 'not-a-case', { items: ITEMS, dueDate: dueIn() })).status).toBe(404);
  });

  it('keeps nothing when the mail server refuses: no letter, no request, no move', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    // The same database, with the SMTP port pointing at a port nobody listens on.
    const config = { ...ctx.config, SMTP_PORT: await freePort() };
    const mailer = createMailer(config);
    const app = createApp({ config, dataSource: ctx.dataSource, boss: ctx.boss, mailer });
    // The service logs the refused send for the operator; keep it out of the test output.
    const logged = jest.spyOn(console, 'error').mockImplementation(() => undefined);
    try {
      const agent = request.agent(app);
      const login = await agent.post('/api/auth/login').send({ username: examiner.user.username, password: examiner.password });
      expect(login.status).toBe(200);
      const res = await agent
        .post(`/api/cases/${caseId}/document-requests`)
        .set('X-CSRF-Token', login.body.csrfToken)
        .send({ items: ITEMS, dueDate: dueIn(), email: uniqueAddress() });
      expect(res.status).toBe(502);
      expect(res.body.error).toMatch(/could not be sent.*Nothing was saved and the case has not moved/);
      expect(logged).toHaveBeenCalledWith(
        expect.stringMatching(/^\[letters\] sending document request DR-[0-9A-F]{8} failed:/),
        expect.stringContaining('ECONNREFUSED'),
      );
    } finally {
      logged.mockRestore();
      mailer.close();
    }
    expect(await ctx.dataSource.query(`SELECT id FROM letter WHERE case_id = $1`, [caseId])).toEqual([]);
    expect(await ctx.dataSource.query(`SELECT id FROM document_request WHERE case_id = $1`, [caseId])).toEqual([]);
    expect(await ctx.dataSource.query(`SELECT kind FROM case_event WHERE case_id = $1 AND kind = 'document-request'`, [caseId])).toEqual([]);
    expect((await ctx.dataSource.query(`SELECT state, due_date FROM exam_case WHERE id = $1`, [caseId]))[0]).toEqual({ state: 'in_review', due_date: null });
    // And the case can still be sent a request once mail works again.
    expect((await send(examiner, caseId, { items: ITEMS, dueDate: dueIn(), email: uniqueAddress() })).status).toBe(201);
  });

  it('lets staff who read cases list letters and open PDFs, each read logged; others are refused', async () => {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const sent = await send(examiner, caseId, { items: ITEMS, dueDate: dueIn(), email: uniqueAddress() });
    expect(sent.status).toBe(201);
    const letterId = sent.body.letter.id;
    // Another examiner may read (not act on) the case.
    expect((await examiner2.agent.get(`/api/cases/${caseId}/letters`)).status).toBe(200);
    const pdf = await examiner2.agent.get(`/api/cases/${caseId}/letters/${letterId}/pdf`);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['cache-control']).toBe('private, no-store');
    expect(pdf.headers['content-disposition']).toMatch(/^inline; filename="request-for-records-DR-/);
    const log = await ctx.dataSource.query(
      `SELECT action, record_type, record_id, detail, taxpayer_label FROM access_log WHERE user_id = $1 AND action = 'view' ORDER BY id`,
      [examiner2.user.id],
    );
    expect(log).toEqual([
      expect.objectContaining({ action: 'view', record_type: 'case', record_id: caseId, detail: 'letters' }),
      expect.objectContaining({
        action: 'view',
        record_type: 'letter',
        record_id: letterId,
        detail: 'document_request PDF',
        taxpayer_label: expect.stringMatching(/^••• ••• \d{3}$/),
      }),
    ]);
    const admin = await signIn(ctx, 'admin');
    expect((await admin.agent.get(`/api/cases/${caseId}/letters`)).status).toBe(403);
    expect((await admin.agent.get(`/api/cases/${caseId}/letters/${letterId}/pdf`)).status).toBe(403);
    expect((await request(ctx.app).get(`/api/cases/${caseId}/letters`)).status).toBe(401);
    // A letter of another case, or none at all, is not found.
    const { caseId: otherCase } = await caseInReview(ctx.dataSource, examiner);
    expect((await examiner.agent.get(`/api/cases/${otherCase}/letters/${letterId}/pdf`)).status).toBe(404);
    expect((await examiner.agent.get(`/api/cases/00000000-0000-4000-8000-000000000000/letters`)).status).toBe(404);
  });
});

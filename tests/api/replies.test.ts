/**
 * The taxpayer's reply link (issue 7; records in parts, issue 13): what the page may show, the
 * upload with its limits and file types, several sends until the due date or until the
 * taxpayer says that is everything, each acknowledged by e-mail (text read back with
 * pdftotext), the link closed after "everything" or gone after its due date, unknown links
 * 404, and the case back in review with an actor-less 'reply-received' event.
 */
import { randomBytes } from 'node:crypto';
import { Client } from 'pg';
import request from 'supertest';
import { REPLY_MAX_FILE_BYTES, REPLY_MAX_FILES } from '../../shared/letters';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { attachment, mailTo, pdfText, waitForMail } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(90_000);

// Small files with real signatures: the server reads the type from the first bytes.
const PDF = Buffer.concat([Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\n'), randomBytes(2000), Buffer.from('\n%%EOF\n')]);
const PNG = Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), randomBytes(3000)]);
const JPEG = Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe0]), randomBytes(3000)]);

const ITEMS = ['Receipts for the vehicle expenses claimed for 2024', "Your employer's wage statement for 2024"];

describe('reply links', () => {
  let ctx: TestContext;
  let examiner: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'replies', returns: 400, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx.close();
  });

  /** Sends a request for a fresh case and returns the token from the e-mail. */
  async function requestSent(dueDate = dueIn(21)): Promise<{ caseId: string; token: string; requestId: string; taxpayerId: string; to: string }> {
    const { caseId, taxpayerId } = await caseInReview(ctx.dataSource, examiner);
    const to = uniqueAddress();
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ITEMS, dueDate, email: to });
    expect(res.status).toBe(201);
    const mail = await waitForMail(to);
    const token = /\/reply\/([A-Za-z0-9_-]{43})/.exec(mail.text ?? '')![1];
    return { caseId, token, requestId: res.body.letter.documentRequest.id, taxpayerId, to };
  }

  /** One send through the link; `complete` says that is everything. */
  const upload = (token: string, files: { name: string; bytes: Buffer; type: string }[], complete = false) => {
    let r = request(ctx.app).post(`/api/replies/${token}`);
    if (complete) r = r.field('complete', 'true');
    for (const f of files) r = r.attach('files', f.bytes, { filename: f.name, contentType: f.type });
    return r;
  };

  it('shows only the name, the records asked for, the due date and the office: no TIN, no figures', async () => {
    const due = dueIn(21);
    const { token, caseId } = await requestSent(due);
    const res = await request(ctx.app).get(`/api/replies/${token}`);
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
    const facts = (
      await ctx.dataSource.query(
        `SELECT t.name, t.tin, c.amount_at_stake::text AS stake, c.risk_score::text AS score FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`,
        [caseId],
      )
    )[0];
    expect(res.body).toEqual({
      state: 'open',
      taxpayerName: facts.name,
      items: ITEMS,
      dueDate: due,
      received: [],
      office: expect.objectContaining({ name: 'Aldermere Revenue Office', phone: expect.any(String), email: expect.any(String) }),
      limits: {
        maxFiles: REPLY_MAX_FILES,
        maxFileBytes: REPLY_MAX_FILE_BYTES,
        maxTotalBytes: expect.any(Number),
        types: ['application/pdf', 'image/jpeg', 'image/png', 'text/csv', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'],
      },
    });
    const raw = JSON.stringify(res.body);
    expect(raw).not.toContain(String(facts.tin));
    expect(raw).not.toContain(String(facts.tin).slice(-3) + '"');
    expect(raw).not.toContain(facts.stake);
    expect(raw).not.toMatch(/tin|score|risk|case/i);
    // The visit is logged, with no user and without the token.
    const log = await ctx.dataSource.query(`SELECT user_id, action, route, detail FROM access_log WHERE record_type = 'document_request' AND action = 'view'`);
    expect(log).toContainEqual({ user_id: null, action: 'view', route: 'GET /api/replies/:token', detail: 'reply link opened' });
    expect(JSON.stringify(await ctx.dataSource.query(`SELECT route, detail FROM access_log`))).not.toContain(token);
  });

  it('answers 404 for an unknown or malformed link', async () => {
    const unknown = randomBytes(32).toString('base64url');
    const a = await request(ctx.app).get(`/api/replies/${unknown}`);
    expect(a.status).toBe(404);
    expect(a.body.error).toMatch(/not known/);
    expect((await request(ctx.app).get('/api/replies/short')).status).toBe(404);
    expect((await upload(unknown, [{ name: 'a.pdf', bytes: PDF, type: 'application/pdf' }])).status).toBe(404);
  });

  it('stores the files and, when the taxpayer says that is everything, closes the link and brings the case back to review', async () => {
    const { token, caseId, requestId, taxpayerId } = await requestSent();
    const res = await upload(
      token,
      [
        { name: 'receipts 2024.pdf', bytes: PDF, type: 'application/pdf' },
        { name: 'C:\\Users\\me\\Pictures\\wage-statement.png', bytes: PNG, type: 'image/png' },
        { name: 'fuel.jpeg', bytes: JPEG, type: 'image/jpeg' },
      ],
      true,
    );
    expect(res.status).toBe(201);
    expect(res.body.received.map((f: { fileName: string }) => f.fileName)).toEqual(['receipts 2024.pdf', 'wage-statement.png', 'fuel.jpeg']);

    const stored = await ctx.dataSource.query(
      `SELECT file_name, content_type, size, content FROM reply_upload WHERE document_request_id = $1 ORDER BY file_name`,
      [requestId],
    );
    expect(stored.map((s: { file_name: string; content_type: string; size: number }) => [s.file_name, s.content_type, s.size])).toEqual([
      ['fuel.jpeg', 'image/jpeg', JPEG.length],
      ['receipts 2024.pdf', 'application/pdf', PDF.length],
      ['wage-statement.png', 'image/png', PNG.length],
    ]);
    expect(Buffer.compare(stored[1].content, PDF)).toBe(0);
    const dr = (await ctx.dataSource.query(`SELECT state, answered_at FROM document_request WHERE id = $1`, [requestId]))[0];
    expect(dr.state).toBe('answered');
    expect(dr.answered_at).not.toBeNull();

    const c = (await ctx.dataSource.query(`SELECT state, due_date FROM exam_case WHERE id = $1`, [caseId]))[0];
    expect(c).toEqual({ state: 'in_review', due_date: null });
    const ev = await ctx.dataSource.query(`SELECT actor_id, from_state, to_state, detail FROM case_event WHERE case_id = $1 AND kind = 'reply-received'`, [
      caseId,
    ]);
    expect(ev).toEqual([
      {
        actor_id: null,
        from_state: 'awaiting_reply',
        to_state: 'in_review',
        detail: expect.objectContaining({ documentRequestId: requestId, files: 3, part: 1, complete: true }),
      },
    ]);
    const log = await ctx.dataSource.query(`SELECT user_id, action, route, taxpayer_id, detail FROM access_log WHERE action = 'change' AND record_id = $1`, [
      requestId,
    ]);
    expect(log).toEqual([
      { user_id: null, action: 'change', route: 'POST /api/replies/:token', taxpayer_id: taxpayerId, detail: 'reply received: 3 files, everything sent' },
    ]);

    // Closed: the page and a further send say so.
    const page = await request(ctx.app).get(`/api/replies/${token}`);
    expect(page.status).toBe(410);
    expect(page.body).toEqual({ error: expect.stringMatching(/you told us you had sent everything/), state: 'answered' });
    const second = await upload(token, [{ name: 'more.pdf', bytes: PDF, type: 'application/pdf' }]);
    expect(second.status).toBe(410);
    expect(second.body.state).toBe('answered');
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM reply_upload WHERE document_request_id = $1`, [requestId]))[0].n).toBe(3);

    // Staff see the reply with the letter and can download each file (logged).
    const list = await examiner.agent.get(`/api/cases/${caseId}/letters`);
    // Newest first: the acknowledgement of the send, then the request with the reply.
    expect(list.body.items.map((l: { kind: string }) => l.kind)).toEqual(['acknowledgement', 'document_request']);
    const req = list.body.items[1].documentRequest;
    expect(req.state).toBe('answered');
    expect(req.uploads).toHaveLength(3);
    const png = req.uploads.find((u: { contentType: string }) => u.contentType === 'image/png');
    const file = await examiner.agent.get(`/api/cases/${caseId}/reply-uploads/${png.id}`).buffer(true).parse(bufferBody);
    expect(file.status).toBe(200);
    expect(file.headers['content-disposition']).toMatch(/^attachment; filename="wage-statement.png"/);
    expect(Buffer.compare(file.body as Buffer, PNG)).toBe(0);
    const clerk = await signIn(ctx, 'clerk');
    expect((await clerk.agent.get(`/api/cases/${caseId}/reply-uploads/${png.id}`)).status).toBe(403);
  });

  it('refuses a link after its due date, and marks the request expired', async () => {
    const { token, requestId, caseId } = await requestSent();
    // The due date passes (written directly: the API never accepts a past date).
    await ctx.dataSource.query(`UPDATE document_request SET due_date = current_date - 1 WHERE id = $1`, [requestId]);
    const page = await request(ctx.app).get(`/api/replies/${token}`);
    expect(page.status).toBe(410);
    expect(page.body.state).toBe('expired');
    expect(page.body.error).toMatch(/expired after its due date/);
    const post = await upload(token, [{ name: 'late.pdf', bytes: PDF, type: 'application/pdf' }]);
    expect(post.status).toBe(410);
    expect(post.body.state).toBe('expired');
    expect((await ctx.dataSource.query(`SELECT state FROM document_request WHERE id = $1`, [requestId]))[0].state).toBe('expired');
    expect((await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [caseId]))[0].state).toBe('awaiting_reply');
    expect(await ctx.dataSource.query(`SELECT id FROM reply_upload WHERE document_request_id = $1`, [requestId])).toEqual([]);
  });

  it('accepts a reply on the due date itself', async () => {
    const { token, requestId } = await requestSent();
    await ctx.dataSource.query(`UPDATE document_request SET due_date = $2 WHERE id = $1`, [requestId, dueIn(0)]);
    expect((await upload(token, [{ name: 'on-time.pdf', bytes: PDF, type: 'application/pdf' }])).status).toBe(201);
  });

  it('enforces the file types, sizes and count, and leaves the link usable after a refused upload', async () => {
    const { token, requestId } = await requestSent();
    const none = await request(ctx.app).post(`/api/replies/${token}`).field('note', 'nothing attached');
    expect(none.status).toBe(422);
    expect(none.body.error).toBe('Choose at least one file to send.');

    const html = await upload(token, [{ name: 'statement.pdf', bytes: Buffer.from('<html><script>alert(1)</script></html>'), type: 'application/pdf' }]);
    expect(html.status).toBe(422);
    expect(html.body.error).toBe('statement.pdf is not a PDF, JPEG, PNG, CSV or XLSX file.');

    const gif = await upload(token, [{ name: 'scan.gif', bytes: PNG, type: 'image/gif' }]);
    expect(gif.status).toBe(422);
    expect(gif.body.error).toMatch(/send PDF, JPEG, PNG, CSV or XLSX files only/);

    const empty = await upload(token, [{ name: 'empty.pdf', bytes: Buffer.alloc(0), type: 'application/pdf' }]);
    expect(empty.status).toBe(422);

    // One good and one bad file: the whole reply is refused, nothing is half stored.
    const mixed = await upload(token, [
      { name: 'good.pdf', bytes: PDF, type: 'application/pdf' },
      { name: 'tool.exe', bytes: Buffer.from('MZ\x90\x00 not a document'), type: 'application/octet-stream' },
    ]);
    expect(mixed.status).toBe(422);
    expect(mixed.body.problems).toEqual(['tool.exe is not a PDF, JPEG, PNG, CSV or XLSX file.']);

    const big = await upload(token, [{ name: 'huge.pdf', bytes: Buffer.concat([PDF, Buffer.alloc(REPLY_MAX_FILE_BYTES)]), type: 'application/pdf' }]);
    expect(big.status).toBe(413);
    expect(big.body.error).toMatch(/larger than 10 MB/);

    const many = await upload(
      token,
      Array.from({ length: REPLY_MAX_FILES + 1 }, (_, i) => ({ name: `page-${i + 1}.pdf`, bytes: PDF, type: 'application/pdf' })),
    );
    expect(many.status).toBe(422);
    expect(many.body.error).toBe(`Send at most ${REPLY_MAX_FILES} files in one reply.`);

    const wrongField = await request(ctx.app).post(`/api/replies/${token}`).attach('document', PDF, { filename: 'a.pdf', contentType: 'application/pdf' });
    expect(wrongField.status).toBe(422);

    // Four files of 8 MB: each within its limit, together over the total.
    const eight = Buffer.concat([PDF, Buffer.alloc(8 * 1024 * 1024)]);
    const total = await upload(
      token,
      Array.from({ length: 4 }, (_, i) => ({ name: `part-${i}.pdf`, bytes: eight, type: 'application/pdf' })),
    );
    expect(total.status).toBe(413);
    expect(total.body.error).toMatch(/together are larger than 30 MB/);

    expect(await ctx.dataSource.query(`SELECT id FROM reply_upload WHERE document_request_id = $1`, [requestId])).toEqual([]);
    expect((await ctx.dataSource.query(`SELECT state FROM document_request WHERE id = $1`, [requestId]))[0].state).toBe('sent');
    // Still usable: the taxpayer can try again with the right files (octet-stream is what some
    // browsers send for any file; the signature decides).
    const ok = await upload(token, [{ name: 'receipts', bytes: PDF, type: 'application/octet-stream' }]);
    expect(ok.status).toBe(201);
    expect(ok.body.received[0].fileName).toBe('receipts.pdf');
  });

  /** A multipart body built by hand: test clients clean file names, the point here is the names as sent. */
  function rawMultipart(parts: { filename: string; type: string; bytes: Buffer }[]): { body: Buffer; contentType: string } {
    const boundary = `----plumbline-${randomBytes(8).toString('hex')}`;
    const chunks: Buffer[] = [];
    for (const p of parts) {
      chunks.push(
        Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="${p.filename}"\r\nContent-Type: ${p.type}\r\n\r\n`),
        p.bytes,
        Buffer.from('\r\n'),
      );
    }
    chunks.push(Buffer.from(`--${boundary}--\r\n`));
    return { body: Buffer.concat(chunks), contentType: `multipart/form-data; boundary=${boundary}` };
  }
  const sendRaw = (token: string, parts: { filename: string; type: string; bytes: Buffer }[]) => {
    const { body, contentType } = rawMultipart(parts);
    return request(ctx.app).post(`/api/replies/${token}`).set('Content-Type', contentType).send(body);
  };

  it('keeps a part whose name is empty, ".." or "dir/" under a safe generated name: every file is stored (issue 12)', async () => {
    const { token, requestId } = await requestSent();
    const res = await sendRaw(token, [
      { filename: '..', type: 'application/pdf', bytes: PDF },
      { filename: 'dir/', type: 'image/png', bytes: PNG },
      { filename: '', type: 'image/jpeg', bytes: JPEG },
      { filename: 'letter.pdf', type: 'application/pdf', bytes: PDF },
    ]);
    expect(res.status).toBe(201);
    expect(res.body.received.map((f: { fileName: string }) => f.fileName)).toEqual(['document-1.pdf', 'document-2.png', 'document-3.jpg', 'letter.pdf']);
    const stored = await ctx.dataSource.query(`SELECT file_name, size FROM reply_upload WHERE document_request_id = $1 ORDER BY file_name`, [requestId]);
    expect(stored).toEqual([
      { file_name: 'document-1.pdf', size: PDF.length },
      { file_name: 'document-2.png', size: PNG.length },
      { file_name: 'document-3.jpg', size: JPEG.length },
      { file_name: 'letter.pdf', size: PDF.length },
    ]);
  });

  it('stores every file of a reply or none, and after none the link stays usable (issue 12)', async () => {
    const { token, requestId } = await requestSent();
    const count = async () => (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM reply_upload WHERE document_request_id = $1`, [requestId]))[0].n;
    const state = async () => (await ctx.dataSource.query(`SELECT state FROM document_request WHERE id = $1`, [requestId]))[0].state;

    // A refused part (not a document, and with an unusable name): nothing stored, link open.
    const refused = await sendRaw(token, [
      { filename: 'good.pdf', type: 'application/pdf', bytes: PDF },
      { filename: '..', type: 'application/octet-stream', bytes: Buffer.from('MZ not a document') },
    ]);
    expect(refused.status).toBe(422);
    expect(refused.body.problems).toEqual(['File 2 is not a PDF, JPEG, PNG, CSV or XLSX file.']);
    expect(await count()).toBe(0);
    expect(await state()).toBe('sent');

    // A fault while storing the second file (a trigger stands in for a full disk): the first is
    // rolled back with it, the link stays usable, and nothing of the token reaches the log.
    const asOwner = async (sql: string) => {
      const c = new Client({ connectionString: ctx.db.ownerUrl });
      await c.connect();
      try {
        await c.query(sql);
      } finally {
        await c.end();
      }
    };
    await asOwner(`CREATE FUNCTION test_refuse_upload() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN IF NEW.file_name = 'second.pdf' THEN RAISE EXCEPTION 'disk full (test)'; END IF; RETURN NEW; END $$;
      CREATE TRIGGER test_refuse_upload BEFORE INSERT ON reply_upload FOR EACH ROW EXECUTE FUNCTION test_refuse_upload()`);
    const logged: string[] = [];
    const spy = jest.spyOn(console, 'error').mockImplementation((...args: unknown[]) => void logged.push(args.map(String).join(' ')));
    let fault;
    try {
      fault = await sendRaw(token, [
        { filename: 'first.pdf', type: 'application/pdf', bytes: PDF },
        { filename: 'second.pdf', type: 'application/pdf', bytes: PDF },
      ]);
    } finally {
      spy.mockRestore();
      await asOwner(`DROP TRIGGER test_refuse_upload ON reply_upload; DROP FUNCTION test_refuse_upload()`);
    }
    expect(fault.status).toBe(500);
    expect(await count()).toBe(0);
    expect(await state()).toBe('sent');
    expect(logged.join('\n')).toMatch(/POST \/api\/replies\/:token failed/);
    expect(logged.join('\n')).not.toContain(token);
    expect((await request(ctx.app).get(`/api/replies/${token}`)).status).toBe(200);

    // Sent again: every file is stored.
    const ok = await sendRaw(token, [
      { filename: 'first.pdf', type: 'application/pdf', bytes: PDF },
      { filename: 'second.pdf', type: 'application/pdf', bytes: PDF },
    ]);
    expect(ok.status).toBe(201);
    expect(await count()).toBe(2);
    // A part: the link stays open for more until the taxpayer says that is everything.
    expect(await state()).toBe('sent');
  });

  it('answers a broken multipart body with 400 and writes no token to the log (issue 12)', async () => {
    const { token } = await requestSent();
    const logged: string[] = [];
    const spies = (['error', 'warn', 'log'] as const).map((k) =>
      jest.spyOn(console, k).mockImplementation((...args: unknown[]) => void logged.push(args.map(String).join(' '))),
    );
    try {
      const cut = await request(ctx.app)
        .post(`/api/replies/${token}`)
        .set('Content-Type', 'multipart/form-data; boundary=XYZ')
        .send('--XYZ\r\nContent-Disposition: form-data; name="files"; filename="a.pdf"\r\nContent-Type: application/pdf\r\n\r\n%PDF-1.4 cut short');
      expect(cut.status).toBe(400);
      expect(cut.body.error).toMatch(/not a readable multipart form/);
      const noBoundary = await request(ctx.app).post(`/api/replies/${token}`).set('Content-Type', 'multipart/form-data').send('x');
      expect(noBoundary.status).toBe(400);
    } finally {
      spies.forEach((s) => s.mockRestore());
    }
    expect(logged.join('\n')).not.toContain(token);
    expect((await request(ctx.app).get(`/api/replies/${token}`)).status).toBe(200);
  });

  it('accepts exactly one of two final sends racing on the same link', async () => {
    const { token, requestId } = await requestSent();
    const [a, b] = await Promise.all([
      upload(token, [{ name: 'a.pdf', bytes: PDF, type: 'application/pdf' }], true),
      upload(token, [{ name: 'b.pdf', bytes: PDF, type: 'application/pdf' }], true),
    ]);
    expect([a.status, b.status].sort()).toEqual([201, 410]);
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM reply_upload WHERE document_request_id = $1`, [requestId]))[0].n).toBe(1);
  });

  it('keeps a reply that arrives after the case moved on, without moving it', async () => {
    const { token, caseId } = await requestSent();
    const refer = await examiner.agent
      .post(`/api/cases/${caseId}/referral`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ summary: 'Handed to field audit before the reply came in.' });
    expect(refer.status).toBe(201);
    const res = await upload(token, [{ name: 'late-but-welcome.pdf', bytes: PDF, type: 'application/pdf' }]);
    expect(res.status).toBe(201);
    expect((await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [caseId]))[0].state).toBe('referred');
    const ev = await ctx.dataSource.query(`SELECT actor_id, from_state, to_state FROM case_event WHERE case_id = $1 AND kind = 'reply-received'`, [caseId]);
    expect(ev).toEqual([{ actor_id: null, from_state: null, to_state: null }]);
  });
  it('an answer to an earlier letter does not end the wait for a newer one', async () => {
    const first = await requestSent();
    const back = await examiner.agent.post(`/api/cases/${first.caseId}/transition`).set('X-CSRF-Token', examiner.csrf).send({ to: 'in_review' });
    expect(back.status).toBe(200);
    const to = uniqueAddress();
    const second = await examiner.agent
      .post(`/api/cases/${first.caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ['Bank statements for March 2024'], dueDate: dueIn(30), email: to });
    expect(second.status).toBe(201);
    const token2 = /\/reply\/([A-Za-z0-9_-]{43})/.exec((await waitForMail(to)).text ?? '')![1];
    const state = async () => (await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [first.caseId]))[0].state;

    expect((await upload(first.token, [{ name: 'old-request.pdf', bytes: PDF, type: 'application/pdf' }], true)).status).toBe(201);
    expect(await state()).toBe('awaiting_reply');
    expect((await upload(token2, [{ name: 'march.pdf', bytes: PDF, type: 'application/pdf' }], true)).status).toBe(201);
    expect(await state()).toBe('in_review');
  });

  /** Mail to `to` whose subject matches, waiting (as long as waitForMail) until `n` have arrived; a failed MailDev list counts as "not yet". */
  async function mailsTo(to: string, subject: RegExp, n: number) {
    const until = Date.now() + 60_000;
    for (;;) {
      const found = (await mailTo(to).catch(() => [])).filter((m) => subject.test(m.subject));
      if (found.length >= n || Date.now() > until) return found;
      await new Promise((r) => setTimeout(r, 200));
    }
  }

  it('takes records in parts: each send is acknowledged and lands on the case; "that is everything" ends the wait', async () => {
    const { token, caseId, requestId, to } = await requestSent();
    const caseState = async () => (await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [caseId]))[0].state;

    const first = await upload(token, [{ name: 'bank-march.pdf', bytes: PDF, type: 'application/pdf' }]);
    expect(first.status).toBe(201);
    expect(first.body).toMatchObject({ part: 1, complete: false, acknowledgement: 'mailed' });
    expect(await caseState()).toBe('awaiting_reply');
    const second = await upload(token, [
      { name: 'fuel.jpeg', bytes: JPEG, type: 'image/jpeg' },
      { name: 'payslip.png', bytes: PNG, type: 'image/png' },
    ]);
    expect(second.body).toMatchObject({ part: 2, complete: false });
    expect(await caseState()).toBe('awaiting_reply');

    // The page lists what came so far, send by send.
    const page = await request(ctx.app).get(`/api/replies/${token}`);
    expect(page.status).toBe(200);
    expect(page.body.received.map((x: { part: number; files: { fileName: string }[] }) => [x.part, x.files.map((f) => f.fileName)])).toEqual([
      [1, ['bank-march.pdf']],
      [2, ['fuel.jpeg', 'payslip.png']],
    ]);

    // Staff see both sends on the case; the request still waits.
    const list = await examiner.agent.get(`/api/cases/${caseId}/letters`);
    const dr = list.body.items.find((l: { kind: string }) => l.kind === 'document_request').documentRequest;
    expect(dr).toMatchObject({ state: 'sent', sends: 2, completedBy: null });
    expect(dr.uploads.map((u: { part: number }) => u.part)).toEqual([1, 2, 2]);

    // "That is everything", with nothing more attached.
    const done = await upload(token, [], true);
    expect(done.status).toBe(201);
    expect(done.body).toMatchObject({ part: 2, complete: true, received: [] });
    expect(await caseState()).toBe('in_review');
    expect((await ctx.dataSource.query(`SELECT state, completed_by FROM document_request WHERE id = $1`, [requestId]))[0]).toEqual({
      state: 'answered',
      completed_by: 'taxpayer',
    });
    expect((await request(ctx.app).get(`/api/replies/${token}`)).status).toBe(410);

    // Three acknowledgements, each kept with the case and mailed with its PDF.
    const acks = await mailsTo(to, /^Records received/, 3);
    expect(acks).toHaveLength(3);
    const letters = (await examiner.agent.get(`/api/cases/${caseId}/letters`)).body.items.filter((l: { kind: string }) => l.kind === 'acknowledgement');
    expect(letters).toHaveLength(3);
    expect(letters.every((l: { recipient: string }) => l.recipient === to)).toBe(true);
    const texts = await Promise.all(
      acks.map(async (m) => pdfText(await attachment(m, m.attachments!.find((a) => a.contentType === 'application/pdf')!.generatedFileName))),
    );
    // Source for the expected words: the letter's own wording (server/letters/pdf/closing-letters-pdf.ts).
    expect(texts.find((t) => t.includes('bank-march.pdf'))).toMatch(/You can send more records through the same link until the end of/);
    expect(texts.find((t) => t.includes('payslip.png'))).toMatch(/your send number 2/);
    expect(texts.some((t) => /You told us that you have now sent everything/.test(t))).toBe(true);
    for (const t of texts) expect(t).toContain('It is not a decision about your return.');
  });

  it('ends the sends when the due date passes: the daily pass brings the case back to review, not as "no reply"', async () => {
    const { token, caseId, requestId } = await requestSent();
    expect((await upload(token, [{ name: 'part-one.pdf', bytes: PDF, type: 'application/pdf' }])).status).toBe(201);
    await ctx.dataSource.query(`UPDATE document_request SET due_date = current_date - 1 WHERE id = $1`, [requestId]);
    const page = await request(ctx.app).get(`/api/replies/${token}`);
    expect(page.status).toBe(410);
    expect(page.body).toEqual({ error: expect.stringMatching(/has passed\. We received what you sent \(one send\)/), state: 'answered' });
    // Staff already see it as answered by date.
    const before = (await examiner.agent.get(`/api/cases/${caseId}/letters`)).body.items.find((l: { kind: string }) => l.kind === 'document_request');
    expect(before.documentRequest).toMatchObject({ state: 'answered', completedBy: 'due-date', sends: 1 });

    const supervisor = await signIn(ctx, 'supervisor');
    const run = await supervisor.agent.post('/api/housekeeping/run').set('X-CSRF-Token', supervisor.csrf);
    expect(run.status).toBe(200);
    expect((await ctx.dataSource.query(`SELECT state, completed_by FROM document_request WHERE id = $1`, [requestId]))[0]).toEqual({
      state: 'answered',
      completed_by: 'due-date',
    });
    expect((await ctx.dataSource.query(`SELECT state FROM exam_case WHERE id = $1`, [caseId]))[0].state).toBe('in_review');
    const ev = await ctx.dataSource.query(
      `SELECT kind, to_state, detail FROM case_event WHERE case_id = $1 AND kind IN ('reply-received', 'reply-overdue') ORDER BY at`,
      [caseId],
    );
    expect(ev.map((e: { kind: string; to_state: string | null }) => [e.kind, e.to_state])).toEqual([
      ['reply-received', null],
      ['reply-received', 'in_review'],
    ]);
    expect(ev[1].detail).toMatchObject({ completedBy: 'due-date', sends: 1 });
  });
});

/**
 * The daily pass (issue 13, server/housekeeping/housekeeping.service.ts) through
 * `POST /api/housekeeping/run`: a reminder then a reply through the reminder's fresh link,
 * an expiry then a late reply, the examiner's digest, and the pass twice in one day. Time
 * moves by the office clock (server/clock.ts), never by waiting.
 */
import { randomBytes } from 'node:crypto';
import request from 'supertest';
import { CaseDetailSchema } from '../../shared/case-api';
import { HousekeepingResultSchema } from '../../shared/housekeeping';
import { addDays, flaggedLetterWords, LetterListSchema, longDate } from '../../shared/letters';
import { advanceClockDays, resetClock, today } from '../../server/clock';
import { housekeepingSettings } from '../../server/housekeeping/housekeeping.service';
import { registerDailyPass } from '../../worker/daily-pass';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { attachment, mailTo, pdfText, waitForMail } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(120_000);

const PDF = Buffer.concat([Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\n'), randomBytes(1500), Buffer.from('\n%%EOF\n')]);
const ITEMS = ['Invoices for the supplies claimed for 2024'];
const tokenIn = (text: string | undefined) => /\/reply\/([A-Za-z0-9_-]{43})/.exec(text ?? '')![1];

describe('the daily pass', () => {
  let ctx: TestContext;
  let supervisor: SignedIn;
  let examiner: SignedIn;
  let examinerMail: string;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'housekeeping', returns: 200, plantShare: 0.12 });
    supervisor = await signIn(ctx, 'supervisor');
    examiner = await signIn(ctx, 'examiner');
    examinerMail = uniqueAddress('examiner');
    await ctx.dataSource.query(`UPDATE app_user SET email = $2 WHERE id = $1`, [examiner.user.id, examinerMail]);
  });
  afterEach(() => resetClock());
  afterAll(async () => {
    await ctx?.close();
  });

  const run = async () => {
    const res = await supervisor.agent.post('/api/housekeeping/run').set('X-CSRF-Token', supervisor.csrf);
    expect(res.status).toBe(200);
    return HousekeepingResultSchema.parse(res.body);
  };
  async function requestSent(due: string) {
    const { caseId } = await caseInReview(ctx.dataSource, examiner);
    const to = uniqueAddress();
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ITEMS, dueDate: due, email: to });
    expect(res.status).toBe(201);
    return { caseId, to, token: tokenIn((await waitForMail(to)).text) };
  }

  it('sends one reminder for a request due in 7 days, with a fresh link that replaces the first; a second run sends nothing', async () => {
    const due = dueIn(7);
    const { caseId, to, token } = await requestSent(due);
    const later = await requestSent(dueIn(30)); // not due soon: no reminder

    const first = await run();
    expect(first).toMatchObject({ day: today(), remindersSent: 1, requestsExpired: 0 });
    const mails = await mailTo(to);
    expect(mails).toHaveLength(2);
    const reminder = mails.find((m) => m.subject.startsWith('Reminder'))!;
    expect(reminder.subject).toMatch(/^Reminder: records for your \d{4} income-tax return$/);
    expect(reminder.attachments?.map((a) => a.contentType)).toEqual(['application/pdf']);
    const text = pdfText(await attachment(reminder, reminder.attachments![0].generatedFileName));
    expect(text).toContain('friendly reminder');
    expect(text).toContain(ITEMS[0]);
    expect(text).toContain(longDate(due));
    expect(text).toContain('nothing more');
    expect(flaggedLetterWords(text)).toEqual([]);
    expect(flaggedLetterWords(reminder.text ?? '')).toEqual([]);
    expect(await mailTo(later.to)).toHaveLength(1);

    // The fresh link works; the first one no longer does.
    const fresh = tokenIn(reminder.text);
    expect(fresh).not.toBe(token);
    expect(text).toContain(`/reply/${fresh}`);
    expect((await request(ctx.app).get(`/api/replies/${token}`)).status).toBe(404);
    expect((await request(ctx.app).get(`/api/replies/${fresh}`)).status).toBe(200);

    // The same day again: nothing new.
    expect(await run()).toEqual({ day: today(), remindersSent: 0, requestsExpired: 0, digestsSent: 0, deadlineWarnings: 0 });
    expect(await mailTo(to)).toHaveLength(2);

    // The taxpayer replies through the reminder's link; the case is back in review.
    const reply = await request(ctx.app)
      .post(`/api/replies/${fresh}`)
      .field('complete', 'true')
      .attach('files', PDF, { filename: 'invoices.pdf', contentType: 'application/pdf' });
    expect(reply.status).toBe(201);
    const d = CaseDetailSchema.parse((await examiner.agent.get(`/api/cases/${caseId}`)).body);
    expect(d.state).toBe('in_review');
    expect(d.history.map((h) => h.summary)).toContain(`Plumbline sent the taxpayer a reminder before the due date, ${longDate(due)}, with a new reply link`);
    const letters = LetterListSchema.parse((await examiner.agent.get(`/api/cases/${caseId}/letters`)).body);
    // The reply's acknowledgement is kept too (issue 13, records in parts).
    expect(letters.items.map((l) => l.kind).sort()).toEqual(['acknowledgement', 'document_request', 'reminder']);
    // The office copy keeps the link masked.
    const reminderLetter = letters.items.find((l) => l.kind === 'reminder')!;
    const office = await examiner.agent.get(`/api/cases/${caseId}/letters/${reminderLetter.id}/pdf`).buffer(true).parse(bufferBody);
    expect(office.status).toBe(200);
    expect(pdfText(office.body as Buffer)).not.toContain(fresh);
  });

  it('expires a request past its date (case back in review, "no reply by"), refuses the late reply, and mails the examiner a digest once', async () => {
    const due = dueIn(21);
    const { caseId, token } = await requestSent(due);
    advanceClockDays(22);
    // A deadline inside 90 days on the same examiner's case, for the digest.
    await ctx.dataSource.query(`UPDATE exam_case SET assess_by = $2 WHERE id = $1`, [caseId, addDays(today(), 40)]);

    const r = await run();
    expect(r.requestsExpired).toBeGreaterThanOrEqual(1);
    expect(r.digestsSent).toBe(1);
    expect(r.deadlineWarnings).toBeGreaterThanOrEqual(1);
    const d = CaseDetailSchema.parse((await examiner.agent.get(`/api/cases/${caseId}`)).body);
    expect(d.state).toBe('in_review');
    expect(d.history.at(-1)).toMatchObject({
      kind: 'reply-overdue',
      fromState: 'awaiting_reply',
      toState: 'in_review',
      summary: `No reply by ${longDate(due)}; the case is back in review`,
    });
    const letters = LetterListSchema.parse((await examiner.agent.get(`/api/cases/${caseId}/letters`)).body);
    expect(letters.items[0].documentRequest?.state).toBe('expired');

    // The late reply is refused with the date.
    const late = await request(ctx.app).post(`/api/replies/${token}`).attach('files', PDF, { filename: 'late.pdf', contentType: 'application/pdf' });
    expect(late.status).toBe(410);
    expect(late.body.state).toBe('expired');

    // The digest: the expiry and the deadline, by return reference and link; no TIN.
    const digest = await waitForMail(examinerMail);
    expect(digest.subject).toBe(`Your cases needing action, ${longDate(today())}`);
    expect(digest.text).toContain('no reply by their date');
    expect(digest.text).toContain(`/cases/${caseId}`);
    expect(digest.text).toContain('Assessment deadlines within 90 days');
    const tin = (await ctx.dataSource.query(`SELECT t.tin FROM exam_case c JOIN taxpayer t ON t.id = c.taxpayer_id WHERE c.id = $1`, [caseId]))[0].tin;
    expect(digest.text).not.toContain(String(tin));
    expect(flaggedLetterWords(digest.text ?? '')).toEqual([]);

    // Twice in one day: nothing new, no second digest.
    expect(await run()).toMatchObject({ remindersSent: 0, requestsExpired: 0, digestsSent: 0, deadlineWarnings: 0 });
    expect(await mailTo(examinerMail)).toHaveLength(1);
    const day = await ctx.dataSource.query(`SELECT result FROM housekeeping_run WHERE day = $1`, [today()]);
    expect(day[0].result.requestsExpired).toBe(r.requestsExpired);
  });

  it("is the supervisor's to run", async () => {
    expect((await examiner.agent.post('/api/housekeeping/run').set('X-CSRF-Token', examiner.csrf)).status).toBe(403);
  });

  it('is scheduled once a day at HOUSEKEEPING_HOUR, and refuses a bad setting with a clear message', async () => {
    process.env.HOUSEKEEPING_HOUR = '5';
    try {
      await registerDailyPass({ boss: ctx.boss, dataSource: ctx.dataSource, config: ctx.config, log: () => undefined });
    } finally {
      delete process.env.HOUSEKEEPING_HOUR;
    }
    const schedules = await ctx.boss.getSchedules();
    expect(schedules).toContainEqual(expect.objectContaining({ name: 'daily-pass', cron: '0 5 * * *' }));
    expect(housekeepingSettings({}).reminderDaysBefore).toBe(7);
    expect(() => housekeepingSettings({ REMINDER_DAYS_BEFORE: 'a week' })).toThrow('REMINDER_DAYS_BEFORE="a week" must be a whole number from 1 to 60');
    expect(() => housekeepingSettings({ HOUSEKEEPING_HOUR: '24' })).toThrow('HOUSEKEEPING_HOUR="24" must be a whole number from 0 to 23');
  });
});

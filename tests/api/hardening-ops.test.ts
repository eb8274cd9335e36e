/**
 * Hardening (issue 12): the sign-in throttle cannot be dodged with a forged X-Forwarded-For,
 * sign-in takes JSON only (no login CSRF from a cross-site form), and control characters in
 * free text are a 422 naming the field instead of a 500 from PostgreSQL.
 */
import { randomUUID } from 'node:crypto';
import request from 'supertest';
import { createApp } from '../../server/app';
import { LoginThrottle } from '../../server/auth/throttle';
import { maskIssueForListing } from '../../shared/returns/batch-rows';
import { createUser, signIn } from '../helpers/auth';
import { csv, LINES_HEADER, RETURNS_HEADER, upload } from '../helpers/batches';
import { createTestContext, testConfig, type TestContext } from '../helpers/test-app';

jest.setTimeout(120_000);

describe('hardening: sign-in and free text', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  /**
   * A fresh app (default limits: 20 failures per address) with the given config overrides.
   * The throttle's counts live in the database, so the ones earlier tests left are cleared.
   */
  async function appWith(overrides: Record<string, string> = {}) {
    await clearThrottle();
    return createApp({
      config: testConfig(ctx.db.url, overrides),
      dataSource: ctx.dataSource,
      boss: ctx.boss,
      mailer: ctx.mailer,
      throttle: new LoginThrottle(ctx.dataSource),
    });
  }

  async function clearThrottle() {
    await ctx.dataSource.query(`DELETE FROM login_throttle`);
  }

  /** Thirty failed sign-ins, each for another user name and with another forged X-Forwarded-For. */
  async function thirtyForgedAttempts(app: ReturnType<typeof createApp>): Promise<number[]> {
    const statuses: number[] = [];
    for (let i = 0; i < 30; i++) {
      const res = await request(app)
        .post('/api/auth/login')
        .set('X-Forwarded-For', `203.0.113.${i + 1}`)
        .send({ username: `nobody-${i}`, password: 'not-the-password' });
      statuses.push(res.status);
    }
    return statuses;
  }

  it('throttles thirty failed sign-ins with thirty different forged X-Forwarded-For values (no TRUST_PROXY)', async () => {
    const statuses = await thirtyForgedAttempts(await appWith());
    // 20 per address in 15 minutes (server/auth/throttle.ts): the socket address counts.
    expect(statuses.slice(0, 20)).toEqual(Array(20).fill(401));
    expect(statuses.slice(20)).toEqual(Array(10).fill(429));
  });

  it('believes X-Forwarded-For only from a proxy TRUST_PROXY names', async () => {
    // The test client connects over loopback, so naming loopback makes it the proxy: each
    // forwarded address is then a client of its own and none reaches the limit.
    const statuses = await thirtyForgedAttempts(await appWith({ TRUST_PROXY: 'loopback' }));
    expect(statuses).toEqual(Array(30).fill(401));
    // A proxy elsewhere: loopback clients are not it, so their header is ignored again.
    const elsewhere = await thirtyForgedAttempts(await appWith({ TRUST_PROXY: '10.0.0.5' }));
    expect(elsewhere.filter((s) => s === 429)).toHaveLength(10);
  });

  it('takes sign-in as JSON only: a form post from another site cannot sign a browser in', async () => {
    await clearThrottle(); // the tests above locked this (loopback) address
    const { user, password } = await createUser(ctx, 'clerk');
    const form = await request(ctx.app).post('/api/auth/login').type('form').send({ username: user.username, password });
    expect(form.status).toBe(415);
    expect(form.body.error).toMatch(/application\/json/);
    expect(form.headers['set-cookie'] ?? []).not.toEqual(expect.arrayContaining([expect.stringMatching(/plumbline\.sid=/)]));
    const text = await request(ctx.app)
      .post('/api/auth/login')
      .set('Content-Type', 'text/plain')
      .send(JSON.stringify({ username: user.username, password }));
    expect(text.status).toBe(415);
    const json = await request(ctx.app).post('/api/auth/login').send({ username: user.username, password });
    expect(json.status).toBe(200);
  });

  describe('control characters are a 422 naming the field', () => {
    const expectRefused = (res: request.Response, field: string) => {
      expect(res.status).toBe(422);
      expect(res.body.issues).toEqual(
        expect.arrayContaining([{ path: field, message: expect.stringMatching(/control character \(U\+0000, character \d+\)/) }]),
      );
    };

    it('a user name at sign-in (and nothing is logged with it)', async () => {
      const before = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM access_log`);
      const res = await request(ctx.app).post('/api/auth/login').send({ username: 'clerk\u0000x', password: 'whatever-long' });
      expectRefused(res, 'username');
      const after = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM access_log`);
      expect(after[0].n).toBe(before[0].n);
    });

    it('a display name, when an account is created or renamed', async () => {
      const admin = await signIn(ctx, 'admin');
      const created = await admin.agent
        .post('/api/users')
        .set('X-CSRF-Token', admin.csrf)
        .send({ username: 'nul-name', displayName: 'Ada\u0000Lovelace', role: 'clerk', password: 'long-enough-pw' });
      expectRefused(created, 'displayName');
      expect(await ctx.dataSource.query(`SELECT id FROM app_user WHERE username = 'nul-name'`)).toEqual([]);
      const { user } = await createUser(ctx, 'clerk');
      const renamed = await admin.agent.patch(`/api/users/${user.id}`).set('X-CSRF-Token', admin.csrf).send({ displayName: 'Bell\u0007' });
      expect(renamed.status).toBe(422);
      expect(renamed.body.issues[0]).toEqual({ path: 'displayName', message: expect.stringMatching(/U\+0007/) });
    });

    it('a note, while tabs and line breaks stay allowed', async () => {
      const examiner = await signIn(ctx, 'examiner');
      const res = await examiner.agent.post(`/api/cases/${randomUUID()}/notes`).set('X-CSRF-Token', examiner.csrf).send({ text: 'Seen the\u0000 ledger' });
      expectRefused(res, 'text');
      // Ordinary multi-line text passes validation (and then meets the unknown case: 404).
      const ok = await examiner.agent.post(`/api/cases/${randomUUID()}/notes`).set('X-CSRF-Token', examiner.csrf).send({ text: 'Line one\n\tline two\r\n' });
      expect(ok.status).toBe(404);
    });
  });

  describe("a rejected batch's report", () => {
    it('lists TIN-like values masked, and its read is access-logged', async () => {
      const clerk = await signIn(ctx, 'clerk');
      const returns = csv([
        RETURNS_HEADER,
        'R-1,12345678,2024,Ana Vell,none,,,', // 8 digits: a TIN that lost a digit
        'R-2,987-65-4321,2024,Bo Tarr,none,,,', // separators
        'R-3,555123456,2024,Cy Moor,bogus,,,', // good TIN, bad activity code
      ]);
      const lines = csv([LINES_HEADER, 'R-1,inc.wages,100.00', 'R-2,inc.wages,100.00', 'R-3,inc.wages,100.00']);
      const res = await upload(clerk, { returns: { name: 'returns.csv', content: returns }, line_items: { name: 'line_items.csv', content: lines } });
      expect(res.status).toBe(422);
      const id: string = res.body.batchId;
      const detail = await clerk.agent.get(`/api/batches/${id}`);
      expect(detail.status).toBe(200);
      const text = JSON.stringify(detail.body.errors);
      for (const raw of ['12345678', '987-65-4321', '987654321', '555123456']) expect(text).not.toContain(raw);
      expect(detail.body.errors).toEqual(
        expect.arrayContaining([
          expect.objectContaining({ row: 2, column: 'tin', message: expect.stringMatching(/^tin "•••••678" has 8 digits; a TIN has 9/) }),
          expect.objectContaining({ row: 3, column: 'tin', message: expect.stringMatching(/"•••-••-•321" must be 9 digits .* e\.g\. ••••••321/) }),
        ]),
      );
      const logged = await ctx.dataSource.query(
        `SELECT action, record_type, detail FROM access_log WHERE record_id = $1 AND user_id = $2 AND action = 'view'`,
        [id, clerk.user.id],
      );
      expect(logged).toEqual([{ action: 'view', record_type: 'filing_batch', detail: 'rejection report' }]);
    });

    it('masks only what can be a TIN (years, rows and amounts stay readable)', () => {
      const issue = { file: 'returns.csv', row: 4, column: 'tin', value: '1234567', message: '"1234567" has 7 digits; a TIN has 9 (tax year 2024)' };
      expect(maskIssueForListing(issue)).toEqual({ ...issue, value: '••••567', message: '"••••567" has 7 digits; a TIN has 9 (tax year 2024)' });
      const amount = { file: 'line_items.csv', row: 9, column: 'amount', value: '123456789.123', message: '"123456789.123" has more than 2 decimals' };
      expect(maskIssueForListing(amount)).toEqual(amount);
      const elsewhere = { file: 'returns.csv', row: 2, column: 'taxpayer_name', value: 'Ana 123456789', message: 'contains 123456789' };
      expect(maskIssueForListing(elsewhere)).toEqual({ ...elsewhere, value: 'Ana ••••••789', message: 'contains ••••••789' });
    });
  });
});

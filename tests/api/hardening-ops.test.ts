/**
 * Hardening (issue 12): the sign-in throttle cannot be dodged with a forged X-Forwarded-For,
 * sign-in takes JSON only (no login CSRF from a cross-site form), and control characters in
 * free text are a 422 naming the field instead of a 500 from PostgreSQL.
 */
import { randomUUID } from 'node:crypto';
import request from 'supertest';
import { createApp } from '../../server/app';
import { LoginThrottle } from '../../server/auth/throttle';
import { createUser, signIn } from '../helpers/auth';
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

  /** A fresh app (own throttle, default limits: 20 failures per address) with the given config overrides. */
  function appWith(overrides: Record<string, string> = {}) {
    return createApp({ config: testConfig(ctx.db.url, overrides), dataSource: ctx.dataSource, boss: ctx.boss, mailer: ctx.mailer, throttle: new LoginThrottle() });
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
    const statuses = await thirtyForgedAttempts(appWith());
    // 20 per address in 15 minutes (server/auth/throttle.ts): the socket address counts.
    expect(statuses.slice(0, 20)).toEqual(Array(20).fill(401));
    expect(statuses.slice(20)).toEqual(Array(10).fill(429));
  });

  it('believes X-Forwarded-For only from a proxy TRUST_PROXY names', async () => {
    // The test client connects over loopback, so naming loopback makes it the proxy: each
    // forwarded address is then a client of its own and none reaches the limit.
    const statuses = await thirtyForgedAttempts(appWith({ TRUST_PROXY: 'loopback' }));
    expect(statuses).toEqual(Array(30).fill(401));
    // A proxy elsewhere: loopback clients are not it, so their header is ignored again.
    const elsewhere = await thirtyForgedAttempts(appWith({ TRUST_PROXY: '10.0.0.5' }));
    expect(elsewhere.filter((s) => s === 429)).toHaveLength(10);
  });

  it('takes sign-in as JSON only: a form post from another site cannot sign a browser in', async () => {
    const { user, password } = await createUser(ctx, 'clerk');
    const form = await request(ctx.app).post('/api/auth/login').type('form').send({ username: user.username, password });
    expect(form.status).toBe(415);
    expect(form.body.error).toMatch(/application\/json/);
    expect(form.headers['set-cookie'] ?? []).not.toEqual(expect.arrayContaining([expect.stringMatching(/plumbline\.sid=/)]));
    const text = await request(ctx.app).post('/api/auth/login').set('Content-Type', 'text/plain').send(JSON.stringify({ username: user.username, password }));
    expect(text.status).toBe(415);
    const json = await request(ctx.app).post('/api/auth/login').send({ username: user.username, password });
    expect(json.status).toBe(200);
  });

  describe('control characters are a 422 naming the field', () => {
    const expectRefused = (res: request.Response, field: string) => {
      expect(res.status).toBe(422);
      expect(res.body.issues).toEqual(expect.arrayContaining([{ path: field, message: expect.stringMatching(/control character \(U\+0000, character \d+\)/) }]));
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
      const created = await admin.agent.post('/api/users').set('X-CSRF-Token', admin.csrf).send({ username: 'nul-name', displayName: 'Ada\u0000Lovelace', role: 'clerk', password: 'long-enough-pw' });
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
});

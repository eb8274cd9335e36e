import request from 'supertest';
import { LoginThrottle } from '../../server/auth/throttle';
import { SessionResponseSchema } from '../../shared/auth';
import { createUser, signIn } from '../helpers/auth';
import { createTestContext, type TestContext } from '../helpers/test-app';

describe('sign-in and sessions', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('signs in, answers {user, csrfToken}, sets an httpOnly SameSite cookie, and me agrees', async () => {
    const { user, password } = await createUser(ctx, 'examiner', 'ivo');
    const agent = request.agent(ctx.app);
    const res = await agent.post('/api/auth/login').send({ username: 'ivo', password });
    expect(res.status).toBe(200);
    const body = SessionResponseSchema.parse(res.body);
    expect(body.user).toMatchObject({ id: user.id, username: 'ivo', role: 'examiner' });
    const cookie = String(res.headers['set-cookie']);
    expect(cookie).toMatch(/plumbline\.sid=/);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Lax/);
    expect(cookie).not.toMatch(/Secure/); // served over http here; secure when PUBLIC_URL is https
    const me = await agent.get('/api/auth/me');
    expect(me.status).toBe(200);
    expect(me.body).toEqual({ user: body.user, csrfToken: body.csrfToken });
    const row = await ctx.dataSource.query(`SELECT action, username FROM access_log WHERE user_id = $1`, [user.id]);
    expect(row).toEqual([{ action: 'sign-in', username: 'ivo' }]);
  });

  it('stores the session in PostgreSQL and signs out', async () => {
    const c = await signIn(ctx, 'clerk');
    const before = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM user_session`);
    expect(before[0].n).toBeGreaterThan(0);
    const out = await c.agent.post('/api/auth/logout').set('X-CSRF-Token', c.csrf);
    expect(out.status).toBe(204);
    expect((await c.agent.get('/api/auth/me')).status).toBe(401);
  });

  it('refuses a wrong password and an unknown user with the same message, and logs it', async () => {
    const { password } = await createUser(ctx, 'clerk', 'tamsin');
    const a = await request(ctx.app)
      .post('/api/auth/login')
      .send({ username: 'tamsin', password: password + 'x' });
    const b = await request(ctx.app).post('/api/auth/login').send({ username: 'nobody-here', password: 'whatever-long' });
    expect(a.status).toBe(401);
    expect(b.status).toBe(401);
    expect(a.body.error).toBe(b.body.error);
    const rows = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM access_log WHERE action = 'sign-in-refused'`);
    expect(rows[0].n).toBeGreaterThanOrEqual(2);
  });

  it('lists every missing field of a bad login body', async () => {
    const res = await request(ctx.app).post('/api/auth/login').send({});
    expect(res.status).toBe(422);
    expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['password', 'username']);
  });

  it('refuses a deactivated user, and ends their open session', async () => {
    const c = await signIn(ctx, 'examiner');
    await ctx.dataSource.query(`UPDATE app_user SET active = false WHERE id = $1`, [c.user.id]);
    expect((await c.agent.get('/api/auth/me')).status).toBe(401);
    const res = await request(ctx.app).post('/api/auth/login').send({ username: c.user.username, password: c.password });
    expect(res.status).toBe(401);
    expect(res.body.error).toMatch(/deactivated/);
  });

  it('rejects a state-changing request without the CSRF token', async () => {
    const c = await signIn(ctx, 'admin');
    const none = await c.agent.post('/api/users').send({ username: 'newbie', displayName: 'New', role: 'clerk', password: 'long-enough-pw' });
    expect(none.status).toBe(403);
    expect(none.body.error).toMatch(/X-CSRF-Token/);
    const wrong = await c.agent
      .post('/api/users')
      .set('X-CSRF-Token', 'x'.repeat(43))
      .send({ username: 'newbie', displayName: 'New', role: 'clerk', password: 'long-enough-pw' });
    expect(wrong.status).toBe(403);
    const right = await c.agent
      .post('/api/users')
      .set('X-CSRF-Token', c.csrf)
      .send({ username: 'newbie', displayName: 'New', role: 'clerk', password: 'long-enough-pw' });
    expect(right.status).toBe(201);
  });

  it('does not leak stack traces or SQL in errors', async () => {
    const res = await request(ctx.app).post('/api/auth/login').set('Content-Type', 'application/json').send('{"username": ');
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).not.toMatch(/SELECT|node_modules|\.ts:\d+/);
  });

  it('rejects an oversized body', async () => {
    const res = await request(ctx.app)
      .post('/api/auth/login')
      .send({ username: 'x', password: 'y'.repeat(2 * 1024 * 1024) });
    expect(res.status).toBe(413);
  });
});

describe('sign-in throttling', () => {
  let ctx: TestContext;
  let now = 1_000_000;
  beforeAll(async () => {
    ctx = await createTestContext();
    // Rebuild the app with a throttle whose clock the test controls.
    const throttle = new LoginThrottle(ctx.dataSource, { perAccount: 3, perAddress: 5, windowMs: 60_000 }, () => now);
    const { createApp } = await import('../../server/app');
    ctx.app = createApp({ config: ctx.config, dataSource: ctx.dataSource, boss: ctx.boss, mailer: ctx.mailer, throttle });
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('locks an account after repeated failures, says for how long, and lets it in after the window', async () => {
    const { password } = await createUser(ctx, 'clerk', 'locked');
    for (let i = 0; i < 3; i++)
      expect((await request(ctx.app).post('/api/auth/login').send({ username: 'locked', password: 'wrong-password' })).status).toBe(401);
    const blocked = await request(ctx.app).post('/api/auth/login').send({ username: 'locked', password });
    expect(blocked.status).toBe(429);
    expect(blocked.body.error).toMatch(/Too many failed sign-ins for this account. Try again in 1 minute/);
    expect(blocked.headers['retry-after']).toBe('60');
    now += 61_000;
    expect((await request(ctx.app).post('/api/auth/login').send({ username: 'locked', password })).status).toBe(200);
  });

  it('counts a burst of parallel attempts before any password is checked', async () => {
    now += 120_000;
    await createUser(ctx, 'clerk', 'burst');
    const answers = await Promise.all(
      Array.from({ length: 10 }, () =>
        request(ctx.app).post('/api/auth/login').set('X-Forwarded-For', '10.9.9.9').send({ username: 'burst', password: 'wrong-password' }),
      ),
    );
    const statuses = answers.map((a) => a.status).sort();
    // Only as many guesses as the account limit (3 here) reach the password check.
    expect(statuses.filter((s) => s === 401)).toHaveLength(3);
    expect(statuses.filter((s) => s === 429)).toHaveLength(7);
  });

  it('limits failures per address across accounts', async () => {
    now += 120_000;
    for (let i = 0; i < 5; i++)
      await request(ctx.app)
        .post('/api/auth/login')
        .send({ username: `guess${i}`, password: 'wrong-password' });
    const res = await request(ctx.app).post('/api/auth/login').send({ username: 'guess-next', password: 'wrong-password' });
    expect(res.status).toBe(429);
    expect(res.body.error).toMatch(/from this computer/);
  });
});

describe('session expiry', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    // 4 s, not 1: on a busy machine the sign-in and the first read can be a second apart.
    ctx = await createTestContext({ SESSION_TTL_SECONDS: '4' });
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('ends an idle session after its time-to-live', async () => {
    const c = await signIn(ctx, 'supervisor');
    expect((await c.agent.get('/api/auth/me')).status).toBe(200);
    await new Promise((r) => setTimeout(r, 5000));
    expect((await c.agent.get('/api/auth/me')).status).toBe(401);
  });
});

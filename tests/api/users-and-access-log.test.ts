import request from 'supertest';
import { AccessLogPageSchema, ACCESS_RECORD_TYPES } from '../../shared/access-log';
import { DEFAULT_SCORING_SETTINGS } from '../../shared/scoring/settings';
import { loadScoredBatch } from '../helpers/scored-batch';
import { UserListSchema } from '../../shared/users';
import { signIn, type SignedIn } from '../helpers/auth';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(60_000);

describe('user administration', () => {
  let ctx: TestContext;
  let admin: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    admin = await signIn(ctx, 'admin', 'osric');
  });
  afterAll(async () => {
    await ctx.close();
  });

  const post = (path: string, body: unknown) =>
    admin.agent
      .post(path)
      .set('X-CSRF-Token', admin.csrf)
      .send(body as object);
  const patch = (path: string, body: unknown) =>
    admin.agent
      .patch(path)
      .set('X-CSRF-Token', admin.csrf)
      .send(body as object);

  it('creates a user who can then sign in, and refuses a taken name', async () => {
    const res = await post('/api/users', { username: 'maud', displayName: 'Maud F.', role: 'supervisor', password: 'a-long-password' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ username: 'maud', role: 'supervisor', active: true });
    expect(res.body.passwordHash).toBeUndefined();
    expect((await request(ctx.app).post('/api/auth/login').send({ username: 'maud', password: 'a-long-password' })).status).toBe(200);
    const again = await post('/api/users', { username: 'maud', displayName: 'Other', role: 'clerk', password: 'a-long-password' });
    expect(again.status).toBe(409);
  });

  it('reports every problem of a bad new user at once', async () => {
    const res = await post('/api/users', { username: 'X!', role: 'boss', password: 'short' });
    expect(res.status).toBe(422);
    expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['displayName', 'password', 'role', 'username']);
  });

  it('changes a role, deactivates (ending sessions) and resets a password', async () => {
    const target = await signIn(ctx, 'clerk');
    const role = await patch(`/api/users/${target.user.id}`, { role: 'examiner' });
    expect(role.status).toBe(200);
    expect((await target.agent.get('/api/auth/me')).body.user.role).toBe('examiner');

    const off = await patch(`/api/users/${target.user.id}`, { active: false });
    expect(off.body.active).toBe(false);
    expect((await target.agent.get('/api/auth/me')).status).toBe(401);

    await patch(`/api/users/${target.user.id}`, { active: true });
    const reset = await post(`/api/users/${target.user.id}/password`, { password: 'brand-new-password' });
    expect(reset.status).toBe(204);
    expect((await request(ctx.app).post('/api/auth/login').send({ username: target.user.username, password: target.password })).status).toBe(401);
    expect((await request(ctx.app).post('/api/auth/login').send({ username: target.user.username, password: 'brand-new-password' })).status).toBe(200);
  });

  it('will not let an administrator lock themselves out', async () => {
    const res = await patch(`/api/users/${admin.user.id}`, { active: false });
    expect(res.status).toBe(409);
  });

  it('lists users without password hashes', async () => {
    const res = await admin.agent.get('/api/users');
    const list = UserListSchema.parse(res.body);
    expect(list.items.find((u) => u.username === 'osric')).toBeTruthy();
    expect(JSON.stringify(res.body)).not.toMatch(/\$2[aby]\$/);
  });
});

describe('access log', () => {
  let ctx: TestContext;
  let admin: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    admin = await signIn(ctx, 'admin', 'auditor');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('is append-only in the database itself', async () => {
    await expect(ctx.dataSource.query(`UPDATE access_log SET detail = 'x'`)).rejects.toThrow(/append-only|permission denied/);
    await expect(ctx.dataSource.query(`DELETE FROM access_log`)).rejects.toThrow(/append-only|permission denied/);
    await expect(ctx.dataSource.query(`TRUNCATE access_log`)).rejects.toThrow(/append-only|permission denied/);
  });

  it('records changes with who and what, and filters by user, action and date', async () => {
    await admin.agent
      .post('/api/users')
      .set('X-CSRF-Token', admin.csrf)
      .send({ username: 'nell', displayName: 'Nell Q.', role: 'examiner', password: 'a-long-password' });
    const res = await admin.agent.get('/api/access-log').query({ user: 'auditor', action: 'change' });
    expect(res.status).toBe(200);
    const page = AccessLogPageSchema.parse(res.body);
    expect(page.items).toHaveLength(1);
    expect(page.items[0]).toMatchObject({
      username: 'auditor',
      role: 'admin',
      action: 'change',
      route: 'POST /api/users',
      recordType: 'user',
      detail: 'created nell as examiner',
    });
    const today = new Date().toISOString().slice(0, 10);
    const dated = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ from: today, to: today })).body);
    expect(dated.total).toBeGreaterThanOrEqual(2); // the sign-in and the change
    const past = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ to: '2020-01-01' })).body);
    expect(past.total).toBe(0);
  });

  it('filters by taxpayer (id, or the last digits of the TIN) ', async () => {
    const tp = '11111111-2222-4333-8444-555555555555';
    await ctx.dataSource.query(
      `INSERT INTO access_log (user_id, username, role, action, route, record_type, record_id, taxpayer_id, taxpayer_label) VALUES (NULL, 'someone', 'examiner', 'view', 'GET /api/cases/x', 'case', 'x', $1, '••• ••• 789')`,
      [tp],
    );
    const byId = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ taxpayer: tp })).body);
    expect(byId.items.map((i) => i.taxpayerId)).toEqual([tp]);
    const byTin = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ taxpayer: '123456789' })).body);
    expect(byTin.items.map((i) => i.taxpayerLabel)).toEqual(['••• ••• 789']);
  });

  it('names a filing batch by one record type, whoever writes the line (re-score and report alike)', async () => {
    const sup = await signIn(ctx, 'supervisor');
    const clerk = await signIn(ctx, 'clerk');
    const b = await loadScoredBatch(ctx.dataSource, { seed: 'access-log-types', returns: 20, plantShare: 0.1 });
    const added = await sup.agent
      .post('/api/scoring/profiles')
      .set('X-CSRF-Token', sup.csrf)
      .send({ settings: DEFAULT_SCORING_SETTINGS, note: 'same weights, second version', activate: false });
    expect(added.status).toBe(201);
    expect((await sup.agent.post(`/api/batches/${b.batchId}/rescore`).set('X-CSRF-Token', sup.csrf).send({ version: added.body.version })).status).toBe(202);
    expect((await clerk.agent.get(`/api/batches/${b.batchId}/report.xlsx`)).status).toBe(200);
    const rows: { record_type: string }[] = await ctx.dataSource.query(`SELECT DISTINCT record_type FROM access_log WHERE record_id = $1`, [b.batchId]);
    expect(rows).toEqual([{ record_type: 'filing_batch' }]);
    const all: { record_type: string }[] = await ctx.dataSource.query(`SELECT DISTINCT record_type FROM access_log WHERE record_type IS NOT NULL`);
    for (const r of all) expect(ACCESS_RECORD_TYPES).toContain(r.record_type);
  });

  it('rejects a malformed date filter with the field named', async () => {
    const res = await admin.agent.get('/api/access-log').query({ from: '01/02/2026' });
    expect(res.status).toBe(422);
    expect(res.body.issues[0]).toEqual({ path: 'from', message: 'Use YYYY-MM-DD' });
  });
});

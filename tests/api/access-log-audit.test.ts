/**
 * The access log for auditors (issue 14): one row per thing a person did, in plain words with
 * the return reference; the action filter; dates with field errors; the XLSX export (logged
 * itself, formula-safe); locked accounts shown and unlocked from Users.
 */
import ExcelJS from 'exceljs';
import request from 'supertest';
import { AccessLogPageSchema } from '../../shared/access-log';
import { UserListSchema, UserSchema } from '../../shared/users';
import { signIn, type SignedIn } from '../helpers/auth';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { binary } from '../helpers/download';

jest.setTimeout(90_000);

async function sheetRows(body: unknown): Promise<string[][]> {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(body as never);
  const rows: string[][] = [];
  wb.getWorksheet('access log')!.eachRow((row) =>
    rows.push((row.values as unknown[]).slice(1).map((v) => (v instanceof Date ? v.toISOString() : String(v ?? '')))),
  );
  return rows;
}

describe('access log for auditors', () => {
  let ctx: TestContext;
  let admin: SignedIn;
  let examiner: SignedIn;
  let ref: string;
  let shown: number;
  beforeAll(async () => {
    ctx = await createTestContext();
    admin = await signIn(ctx, 'admin', 'auditor');
    examiner = await signIn(ctx, 'examiner', 'tamsin');
    const b = await loadScoredBatch(ctx.dataSource, { seed: 'audit-log', returns: 40, plantShare: 0.2 });
    const [c] = await ctx.dataSource.query(
      `SELECT c.id, r.return_ref FROM exam_case c JOIN tax_return r ON r.id = c.return_id WHERE c.batch_id = $1 ORDER BY c.priority DESC LIMIT 1`,
      [b.batchId],
    );
    ref = c.return_ref;
    // The examiner's morning: a page of the queue, then one case and its letters (three reads, one visit).
    const queue = await examiner.agent.get('/api/cases?state=all&pageSize=10');
    expect(queue.status).toBe(200);
    shown = queue.body.items.length;
    expect(shown).toBeGreaterThan(1);
    expect((await examiner.agent.get(`/api/cases/${c.id}`)).status).toBe(200);
    expect((await examiner.agent.get(`/api/cases/${c.id}/letters`)).status).toBe(200);
    expect((await examiner.agent.post(`/api/cases/${c.id}/claim`).set('X-CSRF-Token', examiner.csrf)).status).toBe(200);
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('shows one row per thing a person did, in plain words with the return reference', async () => {
    const page = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ user: 'tamsin' })).body);
    const lines = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM access_log WHERE username = 'tamsin'`))[0].n;
    expect(lines).toBe(shown + 4); // sign-in, a line per case shown, the case, its letters, the claim
    expect(page.items.map((i) => i.summary)).toEqual([
      `Took case ${ref}`,
      `Opened case ${ref} (the case, its letters)`,
      `Looked through the queue (${shown} cases shown)`,
      'Signed in',
    ]);
    const opened = page.items[1];
    expect(opened).toMatchObject({ returnRef: ref, lines: 2, cases: 1, username: 'tamsin', role: 'examiner', action: 'view' });
    expect(opened.taxpayerLabel).toMatch(/^••• ••• \d{3}$/);
    expect(page.total).toBe(4);
    expect(JSON.stringify(page.items.map((i) => i.summary))).not.toMatch(/\/api\/|[0-9a-f]{8}-[0-9a-f]{4}/);
  });

  it('filters by action', async () => {
    const changes = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ user: 'tamsin', action: 'change' })).body);
    expect(changes.items.map((i) => [i.action, i.summary])).toEqual([['change', `Took case ${ref}`]]);
    const views = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ user: 'tamsin', action: 'view' })).body);
    expect(views.items.every((i) => i.action === 'view')).toBe(true);
    expect(views.total).toBe(2);
    const bad = await admin.agent.get('/api/access-log').query({ action: 'delete' });
    expect(bad.status).toBe(422);
    expect(bad.body.issues[0].path).toBe('action');
  });

  it('answers bad dates on their field, with how to fix them', async () => {
    const noDay = await admin.agent.get('/api/access-log').query({ from: '2026-02-31' });
    expect(noDay.status).toBe(422);
    expect(noDay.body.issues).toEqual([{ path: 'from', message: 'There is no such date; check the day and month (YYYY-MM-DD)' }]);
    const reversed = await admin.agent.get('/api/access-log').query({ from: '2026-03-02', to: '2026-03-01' });
    expect(reversed.status).toBe(422);
    expect(reversed.body.issues).toEqual([{ path: 'to', message: expect.stringMatching(/^The end date comes before the start date \(2026-03-02\)/) }]);
    const exportBad = await admin.agent.get('/api/access-log/export.xlsx').query({ to: '31/01/2026' });
    expect(exportBad.status).toBe(422);
    expect(exportBad.body.issues[0]).toEqual({ path: 'to', message: 'Use YYYY-MM-DD' });
  });

  it('exports the filtered rows to XLSX, formula-safe, and logs the export itself', async () => {
    // A name typed at the sign-in door lands in the log as it was typed.
    await request(ctx.app).post('/api/auth/login').send({ username: '=HYPERLINK("http://x.example","y")', password: 'wrong-password' });
    const res = await binary(admin.agent.get('/api/access-log/export.xlsx').query({ action: 'sign-in-refused' }));
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/spreadsheetml/);
    const rows = await sheetRows(res.body);
    expect(rows[0]).toEqual([
      'From (UTC)',
      'To (UTC)',
      'Person',
      'Role',
      'What was done',
      'Return reference',
      'Taxpayer (TIN)',
      'Action',
      'Log lines',
      'First route',
    ]);
    expect(rows).toHaveLength(2);
    expect(rows[1][4]).toMatch(/^Sign-in refused \(user name "=HYPERLINK/);
    expect(rows.flat().filter((v) => /^[=+\-@]/.test(v))).toEqual([]); // nothing a spreadsheet would run

    const all = await sheetRows((await binary(admin.agent.get('/api/access-log/export.xlsx').query({ user: 'tamsin' }))).body);
    expect(all.slice(1).map((r) => r[4])).toEqual([
      `Took case ${ref}`,
      `Opened case ${ref} (the case, its letters)`,
      `Looked through the queue (${shown} cases shown)`,
      'Signed in',
    ]);
    expect(all[2][5]).toBe(ref);

    const logged = AccessLogPageSchema.parse((await admin.agent.get('/api/access-log').query({ user: 'auditor', action: 'export' })).body);
    expect(logged.items.map((i) => i.summary)).toEqual([
      'Exported the access log (4 rows; user "tamsin")',
      'Exported the access log (1 rows; action sign-in-refused)',
    ]);
    expect(logged.items[0]).toMatchObject({ recordType: 'access-log', route: 'GET /api/access-log/export.xlsx' });
  });

  it('is for administrators only', async () => {
    expect((await examiner.agent.get('/api/access-log/export.xlsx')).status).toBe(403);
  });

  // Last in this file's one database: its sign-ins and refusals come after every check of the log above.
  it('shows an account locked by failed sign-ins in Users, and unlocks it (once, logged)', async () => {
    const osric = await signIn(ctx, 'admin', 'osric');
    const clerk = await signIn(ctx, 'clerk', 'perrin');
    for (let i = 0; i < 5; i++) await request(ctx.app).post('/api/auth/login').send({ username: 'perrin', password: 'not-the-password' });
    expect((await request(ctx.app).post('/api/auth/login').send({ username: 'perrin', password: clerk.password })).status).toBe(429);

    const listed = UserListSchema.parse((await osric.agent.get('/api/users')).body).items.find((u) => u.username === 'perrin')!;
    expect(listed.lockedForSeconds).toBeGreaterThan(0);
    expect(listed.lockedForSeconds).toBeLessThanOrEqual(15 * 60);

    const unlocked = await osric.agent.post(`/api/users/${listed.id}/unlock`).set('X-CSRF-Token', osric.csrf);
    expect(unlocked.status).toBe(200);
    expect(UserSchema.parse(unlocked.body).lockedForSeconds).toBeNull();
    expect((await osric.agent.post(`/api/users/${listed.id}/unlock`).set('X-CSRF-Token', osric.csrf)).status).toBe(200);
    expect((await request(ctx.app).post('/api/auth/login').send({ username: 'perrin', password: clerk.password })).status).toBe(200);

    const log = AccessLogPageSchema.parse((await osric.agent.get('/api/access-log').query({ user: 'osric', action: 'change' })).body);
    expect(log.items.map((i) => i.summary)).toEqual(['Changed an account: perrin: unlocked after failed sign-ins']);
    expect((await osric.agent.post(`/api/users/00000000-0000-7000-8000-000000000000/unlock`).set('X-CSRF-Token', osric.csrf)).status).toBe(404);
  });
});

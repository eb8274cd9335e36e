/**
 * POST/GET /api/batches against the real PostgreSQL and pg-boss: good XLSX and CSV
 * batches, the duplicate upload, amended returns, and who may do what.
 */
import fs from 'node:fs';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { BatchCreatedSchema, BatchDetailSchema, BatchListSchema } from '../../shared/returns/batch-rows';
import { computeTotals, type LineCode } from '../../shared/returns/line-codes';
import { centsFromDecimal, centsFromNumeric } from '../../shared/returns/money';
import { signedInContext, signIn, type SignedIn } from '../helpers/auth';
import { uploadHash } from '../../server/batches/intake/sources';
import { countIntakeRows, csv, csvBatch, LINES_HEADER, refusedUpload, RETURNS_HEADER, upload, xlsxBatch } from '../helpers/batches';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(60_000);

describe('batches API: accepted batches', () => {
  const env = signedInContext('clerk');

  it('stores a good CSV batch whole, with totals, and queues it for scoring', async () => {
    const b = await csvBatch({ seed: 'api-csv', returns: 40 });
    const before = await countIntakeRows(env.ctx.dataSource);
    const res = await upload(env.user, { returns: b.files.returns!, line_items: b.files.line_items!, statements: b.files.statements! });
    expect(res.status).toBe(201);
    const created = BatchCreatedSchema.parse(res.body);
    expect(created).toMatchObject({
      state: 'queued',
      counts: { returns: 40, lineItems: b.counts.lineItems, statements: b.counts.statements },
      amendedReturns: 0,
    });

    const after = await countIntakeRows(env.ctx.dataSource);
    expect(after.returns - before.returns).toBe(40);
    expect(after.lineItems - before.lineItems).toBe(b.counts.lineItems);
    expect(after.statements - before.statements).toBe(b.counts.statements);
    expect(after.taxpayers - before.taxpayers).toBe(10); // 40 returns = 10 taxpayers × 4 years

    // Totals computed at intake match the shared rules on the file's own lines.
    const lines = fs
      .readFileSync(b.files.line_items!, 'utf8')
      .trim()
      .split(/\r?\n/)
      .slice(1)
      .map((l) => l.split(','));
    const ref = lines[0][0];
    const expected = computeTotals(lines.filter((l) => l[0] === ref).map((l) => ({ code: l[1] as LineCode, cents: centsFromDecimal(l[2]) })));
    const [row] = await env.ctx.dataSource.query(`SELECT * FROM tax_return WHERE batch_id = $1 AND return_ref = $2`, [created.id, ref]);
    expect(centsFromNumeric(row.computed_income)).toBe(expected.income);
    expect(centsFromNumeric(row.computed_tax)).toBe(expected.tax);
    expect(centsFromNumeric(row.computed_refund)).toBe(expected.refund);
    expect(centsFromNumeric(row.reported_income)).toBe(expected.reported.income);
    expect(row.line_count).toBe(lines.filter((l) => l[0] === ref).length);
    expect(row.superseded).toBe(false);

    // Line numbers follow the file's order; amounts are numeric, exact to the cent.
    const stored = await env.ctx.dataSource.query(`SELECT line_no, line_code, amount FROM line_item WHERE return_id = $1 ORDER BY line_no`, [row.id]);
    expect(stored.map((s: { line_code: string; amount: string }) => [s.line_code, s.amount])).toEqual(
      lines.filter((l) => l[0] === ref).map((l) => [l[1], l[2]]),
    );

    const [batch] = await env.ctx.dataSource.query(`SELECT state, loaded_by, file_hash FROM filing_batch WHERE id = $1`, [created.id]);
    expect(batch).toMatchObject({ state: 'queued', loaded_by: env.user.user.id });
    expect(batch.file_hash).toMatch(/^[0-9a-f]{64}$/);

    const jobs = await env.ctx.dataSource.query(`SELECT data FROM pgboss.job WHERE name = 'score-batch'`);
    expect(jobs.map((j: { data: { batchId: string } }) => j.data.batchId)).toContain(created.id);

    const log = await env.ctx.dataSource.query(`SELECT action, record_id FROM access_log WHERE user_id = $1 AND route = 'POST /api/batches'`, [
      env.user.user.id,
    ]);
    expect(log).toContainEqual({ action: 'change', record_id: created.id });
  });

  it('stores a good XLSX workbook (amounts as numbers, TINs as text) the same way', async () => {
    const b = await xlsxBatch({ seed: 'api-xlsx', returns: 24 });
    const before = await countIntakeRows(env.ctx.dataSource);
    const res = await upload(env.user, { file: b.file });
    expect(res.status).toBe(201);
    expect(res.body.counts).toEqual({ returns: 24, lineItems: b.counts.lineItems, statements: b.counts.statements });
    const after = await countIntakeRows(env.ctx.dataSource);
    expect(after.lineItems - before.lineItems).toBe(b.counts.lineItems);
    const detail = BatchDetailSchema.parse((await env.user.agent.get(`/api/batches/${res.body.id}`)).body);
    expect(detail).toMatchObject({ format: 'xlsx', fileNames: ['aldermere-batch.xlsx'], state: 'queued', errors: [], progress: { scored: 0, total: 24 } });
    expect(detail.loadedBy).toEqual({ id: env.user.user.id, displayName: 'Test clerk' });
  });

  it('answers the same file again with 409 and the earlier batch id, storing nothing twice', async () => {
    const b = await csvBatch({ seed: 'api-dup', returns: 12 });
    const parts = { returns: b.files.returns!, line_items: b.files.line_items! };
    const first = await upload(env.user, parts);
    expect(first.status).toBe(201);
    const before = await countIntakeRows(env.ctx.dataSource);
    const again = await upload(env.user, parts);
    expect(again.status).toBe(409);
    expect(again.body).toEqual({ batchId: first.body.id, error: expect.stringMatching(/already uploaded .* accepted; it is not stored twice/) });
    expect(await countIntakeRows(env.ctx.dataSource)).toEqual(before);

    // Renamed files are still the same file.
    const renamed = await upload(env.user, {
      returns: { name: 'week-48-returns.csv', content: fs.readFileSync(b.files.returns!) },
      line_items: { name: 'week-48-lines.csv', content: fs.readFileSync(b.files.line_items!) },
    });
    expect(renamed.status).toBe(409);
    expect(renamed.body.batchId).toBe(first.body.id);
  });

  it('takes over a batch a stopped server left half-checked, but not one being checked now', async () => {
    const b = await csvBatch({ seed: 'api-stale', returns: 8 });
    const hash = await uploadHash({
      format: 'csv',
      parts: {
        returns: { originalName: 'returns.csv', path: b.files.returns!, size: 0 },
        line_items: { originalName: 'line_items.csv', path: b.files.line_items!, size: 0 },
      },
    });
    const [{ id }] = await env.ctx.dataSource.query(
      `INSERT INTO filing_batch (file_hash, format, file_names, state, updated_at) VALUES ($1, 'csv', '{returns.csv}', 'validating', now()) RETURNING id`,
      [hash],
    );
    const busy = await upload(env.user, { returns: b.files.returns!, line_items: b.files.line_items! });
    expect(busy.status).toBe(409);
    expect(busy.body).toEqual({ batchId: id, error: expect.stringMatching(/being checked right now/) });

    await env.ctx.dataSource.query(`UPDATE filing_batch SET updated_at = now() - interval '2 hours' WHERE id = $1`, [id]);
    const retried = await upload(env.user, { returns: b.files.returns!, line_items: b.files.line_items! });
    expect(retried.status).toBe(201);
    expect(retried.body.id).toBe(id);
    expect((await env.ctx.dataSource.query(`SELECT count(*)::int AS n FROM tax_return WHERE batch_id = $1`, [id]))[0].n).toBe(8);
  });

  it('stores a return for a TIN and year already on file as an amended return, with a notice', async () => {
    const first = await upload(env.user, {
      returns: { name: 'returns.csv', content: csv([RETURNS_HEADER, 'AM-1,000000042,2024,Wren Corrow,none,,,']) },
      line_items: { name: 'line_items.csv', content: csv([LINES_HEADER, 'AM-1,inc.wages,30000.00', 'AM-1,tot.income,30000.00']) },
    });
    expect(first.status).toBe(201);
    const second = await upload(env.user, {
      returns: { name: 'returns.csv', content: csv([RETURNS_HEADER, 'AM-1-R,000000042,2024,Wren Corrow,none,,wren@example.net,']) },
      line_items: { name: 'line_items.csv', content: csv([LINES_HEADER, 'AM-1-R,inc.wages,31000.00', 'AM-1-R,tot.income,31000.00']) },
    });
    expect(second.status).toBe(201);
    expect(second.body.amendedReturns).toBe(1);
    const rows = await env.ctx.dataSource.query(
      `SELECT r.return_ref, r.superseded, r.amends_return_id, r.id FROM tax_return r JOIN taxpayer t ON t.id = r.taxpayer_id WHERE t.tin = '000000042' ORDER BY r.return_ref`,
    );
    expect(rows).toEqual([
      expect.objectContaining({ return_ref: 'AM-1', superseded: true, amends_return_id: null }),
      expect.objectContaining({ return_ref: 'AM-1-R', superseded: false, amends_return_id: rows[0].id }),
    ]);
    const [tp] = await env.ctx.dataSource.query(`SELECT email FROM taxpayer WHERE tin = '000000042'`);
    expect(tp.email).toBe('wren@example.net');
    const detail = BatchDetailSchema.parse((await env.user.agent.get(`/api/batches/${second.body.id}`)).body);
    expect(detail.amendedReturns).toBe(1);
    expect(detail.notices).toEqual([
      expect.objectContaining({
        file: 'returns.csv',
        row: 2,
        column: 'tin',
        message: expect.stringMatching(/^Amended return: TIN ••• ••• 042 already has a 2024 return on file \(return_ref AM-1\)/),
      }),
    ]);
  });

  it('lists batches newest first with state, counts and who loaded them', async () => {
    const res = await env.user.agent.get('/api/batches?page=1&pageSize=2');
    expect(res.status).toBe(200);
    const list = BatchListSchema.parse(res.body);
    expect(list.total).toBeGreaterThanOrEqual(4);
    expect(list.items).toHaveLength(2);
    expect(list.items[0].createdAt >= list.items[1].createdAt).toBe(true);
    expect(list.items[0].loadedBy?.id).toBe(env.user.user.id);
    expect((await env.user.agent.get('/api/batches?pageSize=500')).status).toBe(422);
  });

  it('answers an unknown batch with 404', async () => {
    expect((await env.user.agent.get('/api/batches/00000000-0000-7000-8000-000000000000')).status).toBe(404);
    expect((await env.user.agent.get('/api/batches/not-a-uuid')).status).toBe(404);
  });
});

describe('batches API: who may do what', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('lets only a clerk upload; clerk and supervisor read; others get 403, no session 401', async () => {
    const b = await csvBatch({ seed: 'api-roles', returns: 4 });
    const parts = { returns: b.files.returns!, line_items: b.files.line_items! };
    for (const role of ['examiner', 'supervisor', 'admin'] as const) {
      const c = await signIn(ctx, role);
      expect((await refusedUpload(c, parts)).status).toBe(403);
      expect((await c.agent.get('/api/batches')).status).toBe(role === 'supervisor' ? 200 : 403);
    }
    expect((await ctx.dataSource.query(`SELECT count(*)::int AS n FROM filing_batch`))[0].n).toBe(0);
    const anon = await (await import('supertest')).default(ctx.app).get('/api/batches');
    expect(anon.status).toBe(401);

    const clerk = await signIn(ctx, 'clerk');
    const ok = await upload(clerk, parts);
    expect(ok.status).toBe(201);
    const supervisor = await signIn(ctx, 'supervisor');
    expect((await supervisor.agent.get(`/api/batches/${ok.body.id}`)).status).toBe(200);
    expect((await supervisor.agent.get(`/api/batches/${ok.body.id}/report.xlsx`)).status).toBe(200);
  });

  it('refuses an upload without the CSRF token', async () => {
    const clerk = await signIn(ctx, 'clerk');
    const b = await csvBatch({ seed: 'api-csrf', returns: 4 });
    const res = await clerk.agent.post('/api/batches').attach('returns', b.files.returns!).attach('line_items', b.files.line_items!);
    expect(res.status).toBe(403);
    expect(res.body.error).toMatch(/X-CSRF-Token/);
  });
});

describe('batches API: the validation report as XLSX', () => {
  let ctx: TestContext;
  let clerk: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    clerk = await signIn(ctx, 'clerk');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('downloads every error with row, column and value, text from the upload neutralised against formulas', async () => {
    const res = await upload(clerk, {
      returns: {
        name: 'returns.csv',
        content: csv([RETURNS_HEADER, '"=HYPERLINK(""http://example.net/x"")",123456789,2024,"@Bad Name",none,,,', 'R-2,12345678,2024,Ivo Brackley,none,,,']),
      },
      line_items: { name: 'line_items.csv', content: csv([LINES_HEADER, 'R-2,inc.wages,+1000', 'R-2,tot.income,1000.00']) },
    });
    expect(res.status).toBe(422);
    const report = await clerk.agent.get(`/api/batches/${res.body.batchId}/report.xlsx`).buffer(true).parse(bufferBody);
    expect(report.status).toBe(200);
    expect(report.headers['content-type']).toMatch(/spreadsheetml/);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(report.body as never);
    const ws = wb.getWorksheet('errors')!;
    const rows: unknown[][] = [];
    ws.eachRow((r) => rows.push((r.values as unknown[]).slice(1)));
    expect(rows[0]).toEqual(['File', 'Row', 'Column', 'Value', 'Message']);
    const data = rows.slice(1);
    expect(data).toHaveLength(res.body.errorCount);
    // The formula-looking reference comes back as text with a leading apostrophe, never as a formula.
    expect(data).toContainEqual([
      'returns.csv',
      2,
      'return_ref',
      `'=HYPERLINK("http://example.net/x")`,
      expect.stringMatching(/is not a valid return reference/),
    ]);
    expect(data).toContainEqual(['line_items.csv', 2, 'amount', `'+1000`, expect.stringMatching(/is not an amount/)]);
    ws.eachRow((r) => r.eachCell((c) => expect(c.type).not.toBe(ExcelJS.ValueType.Formula)));
    expect(wb.getWorksheet('batch')).toBeDefined();
    const log = await ctx.dataSource.query(`SELECT action FROM access_log WHERE user_id = $1 AND route LIKE '%report.xlsx'`, [clerk.user.id]);
    expect(log).toEqual([{ action: 'export' }]);
  });
});

describe('batches API: files written by the demo generator', () => {
  let ctx: TestContext;
  let clerk: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    clerk = await signIn(ctx, 'clerk');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('accepts a batch with Windows line endings and a UTF-8 byte-order mark', async () => {
    const b = await csvBatch({ seed: 'api-bom', returns: 8 }, { crlf: true, bom: true });
    expect(fs.readFileSync(b.files.returns!).subarray(0, 3)).toEqual(Buffer.from([0xef, 0xbb, 0xbf]));
    expect(fs.readFileSync(b.files.returns!, 'utf8')).toContain('\r\n');
    const res = await upload(clerk, { returns: b.files.returns!, line_items: b.files.line_items!, statements: b.files.statements! });
    expect(res.status).toBe(201);
    expect(res.body.counts.returns).toBe(8);
    const tins = await ctx.dataSource.query(`SELECT tin, name FROM taxpayer`);
    for (const t of tins) {
      expect(t.tin).toMatch(/^\d{9}$/);
      expect(t.name).not.toMatch(/[\uFEFF\r]/);
    }
  });

  it('never puts the answer labels inside the batch files', async () => {
    const b = await csvBatch({ seed: 'api-labels', returns: 40, plantShare: 0.3 });
    expect(b.labels.length).toBeGreaterThan(0);
    const kinds = /invented_digits|preparer_mill|totals_mismatch|threshold_bunching|planted|kinds/;
    for (const f of Object.values(b.files)) expect(fs.readFileSync(f!, 'utf8')).not.toMatch(kinds);
    expect(path.basename(b.files.returns!)).toBe('returns.csv');
  });
});

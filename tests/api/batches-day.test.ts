/**
 * Batches for the clerk's day (issue 14): a reference already on file for another taxpayer is
 * refused with its row and column and nothing half-written; labels; what scoring made of a
 * batch (cases opened, score bands) and its report; a stalled check detected by the office
 * clock and ended by an idempotent retry.
 */
import ExcelJS from 'exceljs';
import { randomBytes } from 'node:crypto';
import { BatchDetailSchema, BatchRejectedSchema, INTAKE_STALLED_AFTER_SECONDS } from '../../shared/returns/batch-rows';
import { advanceClockDays, resetClock } from '../../server/clock';
import { signedInContext, signIn, type SignedIn } from '../helpers/auth';
import { countIntakeRows, csv, LINES_HEADER, RETURNS_HEADER } from '../helpers/batches';
import { loadScoredBatch } from '../helpers/scored-batch';
import { bufferBody } from '../helpers/download';

jest.setTimeout(90_000);

/** A one-return CSV batch, optionally with a label field. */
function oneReturn(client: SignedIn, ref: string, tin: string, year: number, label?: string, income = 20000 + year) {
  let req = client.agent.post('/api/batches').set('X-CSRF-Token', client.csrf);
  if (label !== undefined) req = req.field('label', label);
  return req
    .attach('returns', Buffer.from(csv([RETURNS_HEADER, `${ref},${tin},${year},Ivo Lanark,none,,,`])), 'returns.csv')
    .attach('line_items', Buffer.from(csv([LINES_HEADER, `${ref},inc.wages,${income}.00`, `${ref},tot.income,${income}.00`])), 'line_items.csv');
}

describe('intake integrity: one return per reference in the office', () => {
  const env = signedInContext('clerk');

  it('refuses a second batch with a reference on file for another taxpayer, naming row and column, and stores nothing of it', async () => {
    expect((await oneReturn(env.user, 'REF-7', '000000701', 2024)).status).toBe(201);
    const before = await countIntakeRows(env.ctx.dataSource);
    const res = await env.user.agent
      .post('/api/batches')
      .set('X-CSRF-Token', env.user.csrf)
      .attach(
        'returns',
        Buffer.from(csv([RETURNS_HEADER, 'NEW-1,000000702,2024,Ada Penhallow,none,,,', 'ref-7,000000703,2024,Bram Tull,none,,,'])),
        'returns.csv',
      )
      .attach('line_items', Buffer.from(csv([LINES_HEADER, 'NEW-1,tot.income,100.00', 'ref-7,tot.income,200.00'])), 'line_items.csv');
    expect(res.status).toBe(422);
    const body = BatchRejectedSchema.parse(res.body);
    expect(body.errors).toEqual([
      expect.objectContaining({
        file: 'returns.csv',
        row: 3,
        column: 'return_ref',
        value: 'ref-7',
        message: expect.stringMatching(/^return_ref ref-7 is already on file for another taxpayer \(a 2024 return, batch \d+, row 2\)/),
      }),
    ]);
    // Nothing half-written: no taxpayer, return or line of the refused batch.
    expect(await countIntakeRows(env.ctx.dataSource)).toEqual(before);
    const [b] = await env.ctx.dataSource.query(`SELECT state, error_count FROM filing_batch WHERE id = $1`, [body.batchId]);
    expect(b).toEqual({ state: 'rejected', error_count: 1 });
  });

  it('refuses the reference of this taxpayer for another tax year', async () => {
    expect((await oneReturn(env.user, 'YR-1', '000000711', 2023)).status).toBe(201);
    const res = await oneReturn(env.user, 'YR-1', '000000711', 2024);
    expect(res.status).toBe(422);
    expect(res.body.errors[0]).toMatchObject({ row: 2, column: 'return_ref', message: expect.stringMatching(/this taxpayer's 2023 return/) });
  });

  it('keeps the same reference for the same taxpayer and year an amendment, as before', async () => {
    expect((await oneReturn(env.user, 'AMD-9', '000000721', 2024)).status).toBe(201);
    const again = await oneReturn(env.user, 'AMD-9', '000000721', 2024, undefined, 25_000); // a corrected figure
    expect(again.status).toBe(201);
    expect(again.body.amendedReturns).toBe(1);
    const rows = await env.ctx.dataSource.query(`SELECT superseded FROM tax_return WHERE return_ref = 'AMD-9' ORDER BY superseded DESC`);
    expect(rows).toEqual([{ superseded: true }, { superseded: false }]);
  });
});

describe('batch labels', () => {
  const env = signedInContext('clerk');

  it('keeps the label given at upload, and names an unlabelled batch by number, date and source', async () => {
    const labelled = await oneReturn(env.user, 'LB-1', '000000731', 2024, '  Post room, March returns ');
    expect(labelled.status).toBe(201);
    const one = BatchDetailSchema.parse((await env.user.agent.get(`/api/batches/${labelled.body.id}`)).body);
    expect(one.label).toBe('Post room, March returns');

    const plain = await oneReturn(env.user, 'LB-2', '000000732', 2024, '');
    const two = BatchDetailSchema.parse((await env.user.agent.get(`/api/batches/${plain.body.id}`)).body);
    expect(two.batchNo).toBe(one.batchNo + 1);
    expect(two.label).toMatch(new RegExp(`^Batch ${two.batchNo} · \\d{1,2} [A-Z][a-z]{2} \\d{4} · CSV files$`));
    expect(two.label).not.toMatch(/returns\.csv/);
  });

  it('refuses a label that is too long, on the label field, before reading the files', async () => {
    const res = await oneReturn(env.user, 'LB-3', '000000733', 2024, 'x'.repeat(81));
    expect(res.status).toBe(422);
    expect(res.body.errors[0]).toMatchObject({ column: 'label', message: expect.stringMatching(/80 characters/) });
    expect(res.body.batchId).toBeNull();
  });
});

describe('a scored batch: cases opened, score bands and a report', () => {
  const env = signedInContext('clerk');

  it('shows how many cases were opened and how the scores spread, and writes them in the report', async () => {
    const b = await loadScoredBatch(env.ctx.dataSource, { seed: 'day-outcome', returns: 60, plantShare: 0.2 });
    const res = await env.user.agent.get(`/api/batches/${b.batchId}`);
    expect(res.status).toBe(200);
    const batch = BatchDetailSchema.parse(res.body);
    expect(batch.state).toBe('scored');
    const [{ cases }] = await env.ctx.dataSource.query(`SELECT count(*)::int AS cases FROM exam_case WHERE batch_id = $1`, [b.batchId]);
    const [{ scored }] = await env.ctx.dataSource.query(`SELECT count(*)::int AS scored FROM return_score WHERE batch_id = $1 AND status = 'scored'`, [
      b.batchId,
    ]);
    const o = batch.outcome!;
    expect(o.casesOpened).toBe(cases);
    expect(cases).toBeGreaterThan(0);
    expect(o.bands).toHaveLength(10);
    expect(o.bands.map((x) => x.from)).toEqual([0, 10, 20, 30, 40, 50, 60, 70, 80, 90]);
    expect(o.bands.reduce((s, x) => s + x.returns, 0)).toBe(scored);
    expect(o.bands.reduce((s, x) => s + x.cases, 0)).toBe(cases);
    for (const x of o.bands) expect(x.cases).toBeLessThanOrEqual(x.returns);

    const report = await env.user.agent.get(`/api/batches/${b.batchId}/report.xlsx`).buffer(true).parse(bufferBody);
    expect(report.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(report.body as never);
    const facts = new Map<string, unknown>();
    wb.getWorksheet('batch')!.eachRow((row, n) => n > 1 && facts.set(String(row.getCell(1).value), row.getCell(2).value));
    expect(facts.get('Cases opened')).toBe(cases);
    expect(facts.get('Batch')).toBe(batch.label);
  });
});

describe('a stalled check', () => {
  const env = signedInContext('clerk');
  afterEach(() => resetClock());

  async function checkingBatch(): Promise<string> {
    const [{ id }] = await env.ctx.dataSource.query(
      `INSERT INTO filing_batch (file_hash, format, file_names, state, rows_checked, progress_at) VALUES ($1, 'csv', '{returns.csv}', 'validating', 4096, now()) RETURNING id`,
      [randomBytes(32).toString('hex')],
    );
    return id;
  }

  it('is told from a slow one by the office clock, and a retry ends it once (idempotent)', async () => {
    const id = await checkingBatch();
    const fresh = BatchDetailSchema.parse((await env.user.agent.get(`/api/batches/${id}`)).body);
    expect(fresh).toMatchObject({ state: 'validating', stalled: false, rowsChecked: 4096 });
    const early = await env.user.agent.post(`/api/batches/${id}/retry`).set('X-CSRF-Token', env.user.csrf);
    expect(early.status).toBe(409);
    expect(early.body.error).toMatch(/still being checked/);

    advanceClockDays((INTAKE_STALLED_AFTER_SECONDS + 60) / 86_400);
    const late = BatchDetailSchema.parse((await env.user.agent.get(`/api/batches/${id}`)).body);
    expect(late.stalled).toBe(true);
    expect(late.elapsedSeconds).toBeGreaterThanOrEqual(INTAKE_STALLED_AFTER_SECONDS);

    const first = await env.user.agent.post(`/api/batches/${id}/retry`).set('X-CSRF-Token', env.user.csrf);
    expect(first.status).toBe(200);
    const ended = BatchDetailSchema.parse(first.body);
    expect(ended).toMatchObject({ state: 'rejected', stalled: false, errorCount: 1 });
    expect(ended.errors[0].message).toMatch(/stopped being checked.*Upload the same file again/);
    const second = await env.user.agent.post(`/api/batches/${id}/retry`).set('X-CSRF-Token', env.user.csrf);
    expect(second.status).toBe(200);
    expect(second.body).toEqual(first.body);
    const logged = await env.ctx.dataSource.query(`SELECT count(*)::int AS n FROM access_log WHERE record_id = $1 AND detail = 'stalled check ended'`, [id]);
    expect(logged[0].n).toBe(1);
    // Its file is freed: the hash is no longer a SHA-256, so the same file is taken as new.
    const [row] = await env.ctx.dataSource.query(`SELECT file_hash FROM filing_batch WHERE id = $1`, [id]);
    expect(row.file_hash).toMatch(/^interrupted:/);
  });

  it('is only for clerks, and answers 404 for no such batch', async () => {
    const sup = await signIn(env.ctx, 'supervisor');
    const id = await checkingBatch();
    expect((await sup.agent.post(`/api/batches/${id}/retry`).set('X-CSRF-Token', sup.csrf)).status).toBe(403);
    expect((await env.user.agent.post(`/api/batches/00000000-0000-7000-8000-000000000000/retry`).set('X-CSRF-Token', env.user.csrf)).status).toBe(404);
  });
});

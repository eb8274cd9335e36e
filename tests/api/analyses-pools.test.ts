/**
 * Digit analyses of pools from the returns on file (issue 15): one preparer's returns, one line
 * code in one batch or tax year, one taxpayer's years. Each pool's counts equal a count made
 * here, straight from the seeded line items (first digits read off the amount's text); the
 * read is in the access log; bad pools get 422 with the path; a pool saved to a case keeps its
 * description instead of a file's name and hash, and its XLSX working paper reads back with
 * exceljs (sheets, a count equal to the stored result, the caution on the cover).
 */
import ExcelJS from 'exceljs';
import { PoolAnalysisSchema, PoolChoicesSchema, SavedAnalysisListSchema, SavedAnalysisSchema, type AnalysisPool } from '../../shared/analyses';
import { readPool } from '../../server/analyses/pool.service';
import { WORKING_PAPER_CAUTION } from '../../server/analyses/working-paper-pdf';
import { HttpError } from '../../server/http/errors';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview } from '../helpers/letter-cases';
import { loadScoredBatch, type LoadedBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(180_000);

/** The itemised lines scoring pools (totals, the refund and zeros left out), of current returns. */
const ITEMISED = `l.line_code NOT LIKE 'tot.%' AND l.line_code <> 'tax.refund' AND l.amount <> 0 AND NOT r.superseded`;

/** First-digit counts 1..9 of amounts given as numeric text, by reading the digits off the text. */
function firstDigitCounts(amounts: string[]): number[] {
  const counts = new Array(9).fill(0);
  for (const a of amounts) {
    const d = a.replace(/[-.]/g, '').replace(/^0+/, '')[0];
    if (d) counts[Number(d) - 1]++;
  }
  return counts;
}

describe('digit analysis pools', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  let batch: LoadedBatch;
  let caseId: string;
  let taxpayerId: string;

  beforeAll(async () => {
    ctx = await createTestContext();
    batch = await loadScoredBatch(ctx.dataSource, { seed: 'analyses-pools', returns: 240, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
    ({ caseId, taxpayerId } = await caseInReview(ctx.dataSource, examiner));
  });
  afterAll(async () => {
    await ctx.close();
  });

  async function amountsOf(sql: string, params: unknown[]): Promise<string[]> {
    const rows: { a: string }[] = await ctx.dataSource.query(
      `SELECT l.amount::text AS a FROM line_item l JOIN tax_return r ON r.id = l.return_id WHERE ${sql}`,
      params,
    );
    return rows.map((r) => r.a);
  }

  async function analyse(pool: AnalysisPool) {
    const res = await examiner.agent.post('/api/analyses/digits/pool').set('X-CSRF-Token', examiner.csrf).send({ pool });
    expect({ status: res.status, body: res.status === 200 ? 'ok' : res.body }).toEqual({ status: 200, body: 'ok' });
    return PoolAnalysisSchema.parse(res.body);
  }

  it('lists preparers, batches and tax years for the pickers', async () => {
    const res = await examiner.agent.get('/api/analyses/pools');
    expect(res.status).toBe(200);
    const choices = PoolChoicesSchema.parse(res.body);
    const codes = [...new Set(batch.generated.returns.map((r) => r.preparer_id).filter(Boolean))].sort();
    expect(choices.preparers.map((p) => p.code)).toEqual(codes);
    expect(choices.batches.map((b) => b.id)).toEqual([batch.batchId]);
    const years = [...new Set(batch.generated.returns.map((r) => Number(r.tax_year)))].sort();
    expect(choices.taxYears).toEqual(years);
    expect(choices.batches[0].taxYears).toEqual(years);
  });

  it("a preparer's pool (all years, then one year) counts what the line items hold; the read is logged", async () => {
    const [p] = await ctx.dataSource.query(
      `SELECT p.id, p.code FROM preparer p JOIN tax_return r ON r.preparer_id = p.id GROUP BY p.id, p.code ORDER BY count(*) DESC, p.code LIMIT 1`,
    );
    const all = await amountsOf(`r.preparer_id = $1 AND ${ITEMISED}`, [p.id]);
    const whole = await analyse({ kind: 'preparer', preparerId: p.id });
    expect(whole.result.count).toBe(all.length);
    expect(whole.result.firstDigit.counts).toEqual(firstDigitCounts(all));
    expect(whole.description).toMatch(new RegExp(`^Preparer ${p.code}, tax years \\d{4}–\\d{4}, ${all.length.toLocaleString('en-GB')} amounts$`));

    const [{ tax_year: year }] = await ctx.dataSource.query(`SELECT min(tax_year) AS tax_year FROM tax_return WHERE preparer_id = $1`, [p.id]);
    const ofYear = await amountsOf(`r.preparer_id = $1 AND r.tax_year = $2 AND ${ITEMISED}`, [p.id, year]);
    const one = await analyse({ kind: 'preparer', preparerId: p.id, taxYear: year });
    expect(one.result.count).toBe(ofYear.length);
    expect(one.result.firstDigit.counts).toEqual(firstDigitCounts(ofYear));
    expect(one.description).toBe(`Preparer ${p.code}, tax year ${year}, ${ofYear.length.toLocaleString('en-GB')} amounts`);

    const log = await ctx.dataSource.query(
      `SELECT action, record_type, record_id, route, detail FROM access_log WHERE record_type = 'line_item' AND record_id = $1 ORDER BY id`,
      [p.id],
    );
    expect(log).toEqual([
      {
        action: 'view',
        record_type: 'line_item',
        record_id: p.id,
        route: 'POST /api/analyses/digits/pool',
        detail: `digit analysis pool: ${whole.description}`,
      },
      { action: 'view', record_type: 'line_item', record_id: p.id, route: 'POST /api/analyses/digits/pool', detail: `digit analysis pool: ${one.description}` },
    ]);
  });

  it('a line code in one batch and in one tax year counts that code alone, zeros included', async () => {
    const inBatch = await amountsOf(`l.line_code = 'inc.wages' AND r.batch_id = $1 AND NOT r.superseded`, [batch.batchId]);
    const a = await analyse({ kind: 'lineCode', lineCode: 'inc.wages', batchId: batch.batchId });
    expect(a.result.count).toBe(inBatch.length);
    expect(a.result.firstDigit.counts).toEqual(firstDigitCounts(inBatch));
    expect(a.description).toMatch(/^Line Wages \(inc\.wages\), Batch \d+ · .*, [\d,]+ amounts$/);

    const year = Number(batch.generated.returns[0].tax_year);
    const inYear = await amountsOf(`l.line_code = 'exp.business.supplies' AND r.tax_year = $1 AND NOT r.superseded`, [year]);
    expect(inYear.length).toBeGreaterThan(20);
    const b = await analyse({ kind: 'lineCode', lineCode: 'exp.business.supplies', taxYear: year });
    expect(b.result.count).toBe(inYear.length);
    expect(b.result.firstDigit.counts).toEqual(firstDigitCounts(inYear));
    expect(b.result.lastTwo.counts.reduce((s, c) => s + c, 0)).toBe(inYear.filter((x) => Math.abs(Number(x)) >= 1000).length);
    expect(b.description).toBe(`Line Supplies (exp.business.supplies), tax year ${year}, ${inYear.length.toLocaleString('en-GB')} amounts`);
  });

  it("a taxpayer's years count their itemised lines; the log line names the taxpayer", async () => {
    const all = await amountsOf(`r.taxpayer_id = $1 AND ${ITEMISED}`, [taxpayerId]);
    const a = await analyse({ kind: 'taxpayer', taxpayerId });
    expect(a.result.count).toBe(all.length);
    expect(a.result.firstDigit.counts).toEqual(firstDigitCounts(all));
    const [log] = await ctx.dataSource.query(
      `SELECT taxpayer_id, taxpayer_label, detail FROM access_log WHERE record_type = 'line_item' AND record_id = $1 ORDER BY id DESC LIMIT 1`,
      [taxpayerId],
    );
    expect(log.taxpayer_id).toBe(taxpayerId);
    expect(log.taxpayer_label).toMatch(/^••• ••• \d{3}$/);
    expect(a.description).toContain(`(TIN ${log.taxpayer_label})`);
  });

  it('bad pools: 422 with the path of each mistake, 404 for what does not exist, nothing logged', async () => {
    const send = (body: unknown) =>
      examiner.agent
        .post('/api/analyses/digits/pool')
        .set('X-CSRF-Token', examiner.csrf)
        .send(body as object);
    const before = Number((await ctx.dataSource.query(`SELECT count(*) AS n FROM access_log WHERE record_type = 'line_item'`))[0].n);
    const both = await send({ pool: { kind: 'lineCode', lineCode: 'inc.wages', batchId: batch.batchId, taxYear: 2024 } });
    expect(both.status).toBe(422);
    expect(both.body.issues).toEqual([{ path: 'pool.batchId', message: expect.stringMatching(/exactly one of "batchId".*or "taxYear"/) }]);
    const neither = await send({ pool: { kind: 'lineCode', lineCode: 'inc.wages' } });
    expect(neither.status).toBe(422);
    expect(neither.body.issues.map((i: { path: string }) => i.path)).toEqual(['pool.batchId']);
    const code = await send({ pool: { kind: 'lineCode', lineCode: 'inc.lottery', taxYear: 2024 } });
    expect(code.status).toBe(422);
    expect(code.body.issues).toEqual([{ path: 'pool.lineCode', message: expect.stringMatching(/^Choose a line code: inc\.wages/) }]);
    const year = await send({ pool: { kind: 'preparer', preparerId: '00000000-0000-4000-8000-000000000000', taxYear: 'last' } });
    expect(year.status).toBe(422);
    expect(year.body.issues.map((i: { path: string }) => i.path)).toEqual(['pool.taxYear']);
    const kind = await send({ pool: { kind: 'county' } });
    expect(kind.status).toBe(422);
    expect(kind.body.issues[0].message).toMatch(/"preparer", "lineCode" or "taxpayer"/);
    const none = await send({ pool: { kind: 'preparer', preparerId: '00000000-0000-4000-8000-000000000000' } });
    expect(none.status).toBe(404);
    expect(none.body.error).toMatch(/No such preparer/);
    const empty = await send({ pool: { kind: 'lineCode', lineCode: 'inc.wages', taxYear: 1999 } });
    expect(empty.status).toBe(422);
    expect(empty.body.error).toMatch(/tax year 1999: no amounts on file/);

    const onCase = await examiner.agent
      .post(`/api/cases/${caseId}/analyses`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { pool: { kind: 'taxpayer', taxpayerId: 'x' } } });
    expect(onCase.status).toBe(422);
    expect(onCase.body.issues.map((i: { path: string }) => i.path)).toEqual(['source.pool.taxpayerId']);
    const twoSources = await examiner.agent
      .post(`/api/cases/${caseId}/analyses`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { uploadId: '00000000-0000-4000-8000-000000000000', pool: { kind: 'taxpayer', taxpayerId } } });
    expect(twoSources.status).toBe(422);
    expect(twoSources.body.issues[0]).toEqual({ path: 'source', message: expect.stringMatching(/exactly one source/) });
    const column = await examiner.agent
      .post(`/api/cases/${caseId}/analyses`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { pool: { kind: 'taxpayer', taxpayerId } }, column: 'amount' });
    expect(column.status).toBe(422);
    expect(column.body.issues).toEqual([{ path: 'column', message: expect.stringMatching(/pool .* has no columns/) }]);
    const after = Number((await ctx.dataSource.query(`SELECT count(*) AS n FROM access_log WHERE record_type = 'line_item'`))[0].n);
    expect(after).toBe(before);
  });

  it('a pool larger than the cap is refused with how to narrow it', async () => {
    const [p] = await ctx.dataSource.query(`SELECT preparer_id AS id FROM tax_return WHERE preparer_id IS NOT NULL LIMIT 1`);
    const err = await readPool(ctx.dataSource, { kind: 'preparer', preparerId: p.id }, 10).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(HttpError);
    expect((err as HttpError).status).toBe(413);
    expect((err as HttpError).message).toMatch(/amounts, more than the 10 one analysis reads\. Narrow the pool: choose one tax year\.$/);
  });

  it('a pool saved to the case keeps its description; its XLSX working paper reads back; both are logged', async () => {
    const [p] = await ctx.dataSource.query(
      `SELECT p.id, p.code FROM preparer p JOIN tax_return r ON r.preparer_id = p.id GROUP BY p.id, p.code ORDER BY count(*) DESC, p.code LIMIT 1`,
    );
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/analyses`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { pool: { kind: 'preparer', preparerId: p.id } } });
    expect(res.status).toBe(201);
    const saved = SavedAnalysisSchema.parse(res.body);
    const all = await amountsOf(`r.preparer_id = $1 AND ${ITEMISED}`, [p.id]);
    expect(saved).toMatchObject({ fileName: null, sha256: null, source: { pool: { kind: 'preparer', preparerId: p.id } } });
    expect(saved.sourceLabel).toMatch(new RegExp(`^Preparer ${p.code}, tax years .*, ${all.length.toLocaleString('en-GB')} amounts$`));
    expect(saved.result.firstDigit.counts).toEqual(firstDigitCounts(all));
    const list = SavedAnalysisListSchema.parse((await examiner.agent.get(`/api/cases/${caseId}/analyses`)).body);
    expect(list.analyses.map((a) => a.sourceLabel)).toEqual([saved.sourceLabel]);

    const xlsx = await examiner.agent.get(`/api/cases/${caseId}/analyses/${saved.id}/xlsx`).buffer(true).parse(bufferBody);
    expect(xlsx.status).toBe(200);
    expect(xlsx.headers['content-type']).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(xlsx.body as never);
    expect(wb.worksheets.map((w) => w.name)).toEqual([
      'Working paper',
      'First digit',
      'Second digit',
      'First two digits',
      'Last two digits',
      'Summation',
      'Second order',
      'Duplication',
      'Other figures',
    ]);
    const cover = new Map<string, unknown>();
    wb.getWorksheet('Working paper')!.eachRow((row) => cover.set(String(row.getCell(1).value), row.getCell(2).value));
    expect(cover.get('Pool')).toBe(saved.sourceLabel);
    expect(cover.has('File SHA-256')).toBe(false);
    expect(cover.get('Amounts')).toBe(saved.result.count);
    expect(cover.get('Caution')).toBe(WORKING_PAPER_CAUTION);
    expect(cover.get('Run by')).toBe(saved.createdBy.name);
    const first = wb.getWorksheet('First digit')!;
    expect([first.getCell('A1').value, first.getCell('B1').value]).toEqual(['Digits', 'Count']);
    expect(Array.from({ length: 9 }, (_, i) => first.getCell(i + 2, 2).value)).toEqual(saved.result.firstDigit.counts);
    expect(first.getCell('A2').value).toBe('1');
    const lastTwo = wb.getWorksheet('Last two digits')!;
    expect(lastTwo.getCell('A2').value).toBe('00');
    expect(lastTwo.getCell(101, 2).value).toBe(saved.result.lastTwo.counts[99]);

    const log = await ctx.dataSource.query(
      `SELECT action, record_type, detail FROM access_log WHERE (record_id = $1 AND detail LIKE '%digit analys%') OR (record_type = 'line_item' AND route LIKE 'POST /api/cases/%') ORDER BY id`,
      [caseId],
    );
    expect(log).toEqual([
      { action: 'view', record_type: 'line_item', detail: `digit analysis pool: ${saved.sourceLabel}` },
      { action: 'change', record_type: 'case', detail: `digit analysis ${saved.id} saved (${saved.sourceLabel})` },
      { action: 'view', record_type: 'case', detail: 'digit analyses listed (1)' },
      { action: 'export', record_type: 'case', detail: `digit analysis ${saved.id} working paper (XLSX)` },
    ]);
  });

  it('text that could start a formula is written as text in the workbook', async () => {
    // A reply file's name is the taxpayer's: one starting with "=" must not become a formula.
    const { renderWorkingPaperXlsx } = await import('../../server/analyses/working-paper-xlsx');
    const saved = SavedAnalysisSchema.parse(
      (
        await examiner.agent
          .post(`/api/cases/${caseId}/analyses`)
          .set('X-CSRF-Token', examiner.csrf)
          .send({ source: { pool: { kind: 'taxpayer', taxpayerId } } })
      ).body,
    );
    const bytes = await renderWorkingPaperXlsx(
      {
        caseRef: null,
        sourceLabel: '=HYPERLINK("http://example.invalid","x")',
        fileName: '+cmd.csv',
        sha256: 'a'.repeat(64),
        what: '@column',
        ranBy: '-someone',
        ranAt: new Date('2026-01-02T03:04:00Z'),
        profile: saved.result as never,
      },
      { ...saved.result, split: { column: '=group', groups: [] } },
    );
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(bytes as never);
    const texts: unknown[] = [];
    wb.eachSheet((ws) => ws.eachRow((row) => row.eachCell((c) => texts.push(c.value))));
    const formulas = texts.filter((v) => typeof v === 'object' && v !== null && ('formula' in v || 'sharedFormula' in v));
    expect(formulas).toEqual([]);
    expect(texts).toEqual(expect.arrayContaining([`'=HYPERLINK("http://example.invalid","x")`, "'+cmd.csv", "'@column", "'-someone", "'=group"]));
  });
});

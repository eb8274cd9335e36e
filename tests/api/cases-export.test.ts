/**
 * `GET /api/cases/export.xlsx`: the filtered queue as a workbook (opened here with exceljs),
 * safe against formula injection, written to the access log, for supervisors only.
 */
import ExcelJS from 'exceljs';
import { SCREENING_CAUTION } from '../../shared/cautions';
import { CaseListSchema } from '../../shared/case-api';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInState, openCaseIds } from '../helpers/cases';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(120_000);

async function workbookOf(body: Buffer): Promise<ExcelJS.Workbook> {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(body as unknown as ArrayBuffer);
  return wb;
}

/** The data rows of the Queue sheet as plain values, header first. */
function rowsOf(wb: ExcelJS.Workbook): unknown[][] {
  const ws = wb.getWorksheet('Queue')!;
  const out: unknown[][] = [];
  ws.eachRow((row) => out.push((row.values as unknown[]).slice(1)));
  return out;
}

describe('queue export (XLSX)', () => {
  let ctx: TestContext;
  let supervisor: SignedIn;
  let examiner: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'cases-export', returns: 300, plantShare: 0.1 });
    supervisor = await signIn(ctx, 'supervisor');
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const download = (query = '') => supervisor.agent.get(`/api/cases/export.xlsx${query}`).buffer(true).parse(bufferBody);

  it('writes every case of the filtered queue in queue order, one row each, figures as numbers', async () => {
    const res = await download();
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename="plumbline-queue-\d{4}-\d{2}-\d{2}\.xlsx"$/);
    const wb = await workbookOf(res.body as Buffer);
    const rows = rowsOf(wb);
    expect(rows[0]).toEqual([
      'Return',
      'Tax year',
      'Taxpayer',
      'TIN (masked)',
      'Activity',
      'Risk score',
      'Amount at stake',
      'Priority',
      'State',
      'Examiner',
      'Opened',
      'Due',
      'Case id',
      'Assess by',
    ]);
    const list = CaseListSchema.parse((await supervisor.agent.get('/api/cases?pageSize=100')).body);
    expect(rows.length - 1).toBe(list.total);
    expect(rows.slice(1).map((r) => r[12])).toEqual(list.items.map((i) => i.id));
    const first = rows[1];
    const item = list.items[0];
    expect(first.slice(0, 10)).toEqual([
      item.returnRef,
      item.taxYear,
      item.taxpayerName,
      item.maskedTin,
      item.activityCode,
      item.riskScore,
      Number(item.amountAtStake),
      item.priority,
      'Open',
      undefined,
    ]);
    expect(first[10]).toBeInstanceOf(Date);
    const about = wb.getWorksheet('About')!;
    const aboutText: string[] = [];
    about.eachRow((r) => aboutText.push(String(r.getCell(1).value), String(r.getCell(2).value)));
    expect(aboutText).toEqual(expect.arrayContaining(['Exported by', supervisor.user.username, 'Caution', SCREENING_CAUTION]));
  });

  it('applies the list filters (state and assignee)', async () => {
    const ids = await openCaseIds(ctx.dataSource, 3);
    await caseInState(ctx.dataSource, ids[0], 'in_review', examiner);
    await caseInState(ctx.dataSource, ids[1], 'assigned', examiner);
    const rows = rowsOf(await workbookOf((await download(`?assignee=${examiner.user.id}&sort=score`)).body as Buffer));
    expect(
      rows
        .slice(1)
        .map((r) => r[12])
        .sort(),
    ).toEqual([ids[0], ids[1]].sort());
    expect(rows.slice(1).map((r) => r[9])).toEqual(['Test examiner', 'Test examiner']);
    const review = rowsOf(await workbookOf((await download('?state=in_review')).body as Buffer));
    expect(review.slice(1).map((r) => [r[12], r[8]])).toEqual([[ids[0], 'In review']]);
    expect(rowsOf(await workbookOf((await download('?state=finished')).body as Buffer))).toHaveLength(1);
  });

  it('neutralises text that a spreadsheet would read as a formula', async () => {
    const [id] = await openCaseIds(ctx.dataSource, 1);
    await ctx.dataSource.query(
      `UPDATE taxpayer SET name = '=HYPERLINK("http://evil.example","Click")' WHERE id = (SELECT taxpayer_id FROM exam_case WHERE id = $1)`,
      [id],
    );
    const wb = await workbookOf((await download()).body as Buffer);
    const row = rowsOf(wb).find((r) => r[12] === id)!;
    expect(row[2]).toBe(`'=HYPERLINK("http://evil.example","Click")`);
    // No cell anywhere in the workbook is a formula.
    let formulas = 0;
    wb.eachSheet((ws) => ws.eachRow((r) => r.eachCell((c) => void (c.type === ExcelJS.ValueType.Formula && formulas++))));
    expect(formulas).toBe(0);
  });

  it('writes the export to the access log with its filters and row count', async () => {
    const before = (await ctx.dataSource.query(`SELECT count(*)::int AS n FROM access_log WHERE action = 'export'`))[0].n;
    const res = await download('?state=open&sort=age');
    const n = rowsOf(await workbookOf(res.body as Buffer)).length - 1;
    const log = await ctx.dataSource.query(`SELECT user_id, route, record_type, detail FROM access_log WHERE action = 'export' ORDER BY id OFFSET $1`, [
      before,
    ]);
    expect(log).toEqual([
      { user_id: supervisor.user.id, route: 'GET /api/cases/export.xlsx', record_type: 'case-queue', detail: `${n} cases; state open, sorted by age` },
    ]);
  });

  it('is for supervisors only, and checks its query like the list (422)', async () => {
    expect((await examiner.agent.get('/api/cases/export.xlsx')).status).toBe(403);
    const bad = await supervisor.agent.get('/api/cases/export.xlsx?state=shelved');
    expect(bad.status).toBe(422);
    expect(bad.body.issues[0].path).toBe('state');
  });
});

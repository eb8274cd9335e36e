/**
 * Every kind of bad input is refused with a clear report, and not one row of the batch is
 * stored: each test counts the rows of every intake table before and after.
 */
import ExcelJS from 'exceljs';
import request from 'supertest';
import { BatchDetailSchema, BatchRejectedSchema } from '../../shared/returns/batch-rows';
import { signIn, type SignedIn } from '../helpers/auth';
import { countIntakeRows, csv, csvBatch, LINES_HEADER, RETURNS_HEADER, STATEMENTS_HEADER, upload, type Part } from '../helpers/batches';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(60_000);

const goodReturns = csv([
  RETURNS_HEADER,
  'R-1,012345678,2024,Maud Fennick,retail,PRP-0001,maud@example.net,"1 Mill Lane, Stallow"',
  'R-2,987654321,2023,Ivo Brackley,none,,,',
]);
const goodLines = csv([
  LINES_HEADER,
  'R-1,inc.business.receipts,52000.00',
  'R-1,exp.business.supplies,1200.50',
  'R-1,tot.income,50799.50',
  'R-2,inc.wages,41000',
  'R-2,tot.income,41000.00',
]);
const text = (name: string, content: string | Buffer): Part => ({ name, content });

async function workbook(sheets: Record<string, unknown[][]>): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  for (const [name, rows] of Object.entries(sheets)) {
    const ws = wb.addWorksheet(name);
    for (const r of rows) ws.addRow(r);
  }
  return Buffer.from(await wb.xlsx.writeBuffer());
}

describe('batches API: bad input is rejected whole', () => {
  let ctx: TestContext;
  let clerk: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext();
    clerk = await signIn(ctx, 'clerk');
  });
  afterAll(async () => {
    await ctx.close();
  });

  /** Uploads, expects a rejection, and proves nothing was stored. */
  async function rejected(parts: Parameters<typeof upload>[1], status = 422) {
    const before = await countIntakeRows(ctx.dataSource);
    const res = await upload(clerk, parts);
    expect({ status: res.status, body: res.body }).toMatchObject({ status });
    expect(await countIntakeRows(ctx.dataSource)).toEqual(before);
    return status === 409 ? (res.body as ReturnType<typeof BatchRejectedSchema.parse>) : BatchRejectedSchema.parse(res.body);
  }

  it('lists every row error of every file, not only the first, and stores nothing', async () => {
    const parts = {
      returns: text(
        'returns.csv',
        csv([
          RETURNS_HEADER,
          'R-1,012345678,2024,Maud Fennick,retail,PRP-0001,,',
          'R-2,12345678,2024,Ivo Brackley,bakery,,not-mail,', // three errors
          'R-1,111111111,2023,Dup Ref,none,,,', // duplicate return_ref
          'R-4,012345678,2024,Same Taxpayer,retail,,,', // same TIN and year again
          'R-5,222222222,2031,Future Year,none,,,', // year not yet ended
        ]),
      ),
      line_items: text(
        'line_items.csv',
        csv([
          LINES_HEADER,
          'R-1,inc.wages,1000.00',
          'R-1,exp.business.supplies,12.345',
          'R-1,inc.salary,5',
          'R-9,inc.wages,10', // no such return
          'R-1,tot.income,100',
          'R-1,tot.income,100', // a total twice
          'R-1,exp.business.other,-5',
          'R-1,ded.charity,"1,200.00"',
        ]),
      ),
      statements: text('statements.csv', csv([STATEMENTS_HEADER, '012345678,2024,dividends,Bank of Aldermere,10.00'])),
    };
    const body = await rejected(parts);
    expect(body.errorCount).toBe(body.errors.length);
    const where = body.errors.map((e) => `${e.file}:${e.row}:${e.column}`);
    expect(where).toEqual([
      'returns.csv:3:tin',
      'returns.csv:3:activity_code',
      'returns.csv:3:email',
      'returns.csv:4:return_ref',
      'returns.csv:5:tin',
      'returns.csv:6:tax_year',
      'line_items.csv:3:amount',
      'line_items.csv:4:line_code',
      'line_items.csv:5:return_ref',
      'line_items.csv:7:line_code',
      'line_items.csv:8:amount',
      'line_items.csv:9:amount',
      'statements.csv:2:kind',
    ]);
    const msg = (i: number) => body.errors[i].message;
    expect(msg(0)).toMatch(/has 8 digits; a TIN has 9/);
    expect(msg(3)).toBe('return_ref R-1 is used again (first on row 2); every return in a batch needs its own reference.');
    expect(msg(4)).toMatch(/This batch already has a 2024 return for TIN ••• ••• 678 \(row 2, return_ref R-1\)/);
    expect(msg(8)).toBe('return_ref R-9 has no row in returns; every line item must belong to a return of this batch.');
    expect(msg(9)).toMatch(/tot\.income appears more than once for return R-1/);
    expect(body.errors[11]).toMatchObject({ value: '1,200.00', message: expect.stringMatching(/contains a comma/) });
    expect(body.error).toMatch(/^The batch was rejected: 13 problems found\. Nothing of it was stored\./);

    // The rejected batch is on record with its report, for the clerk to fix and send again.
    const detail = BatchDetailSchema.parse((await clerk.agent.get(`/api/batches/${body.batchId}`)).body);
    expect(detail).toMatchObject({ state: 'rejected', errorCount: 13, counts: { returns: 0, lineItems: 0, statements: 0 } });
    expect(detail.errors).toEqual(body.errors);
    // The same bad files again are recognised and pointed to that report.
    const again = await rejected(parts, 409);
    expect(again).toMatchObject({ batchId: body.batchId });
  });

  it('rejects a batch whose only problem is found in the last line item (the rows already sent are rolled back)', async () => {
    const b = await csvBatch({ seed: 'bad-last-line', returns: 40 });
    const fs = await import('node:fs');
    const original = fs.readFileSync(b.files.line_items!, 'utf8');
    const lines = original + `${original.split(/\r?\n/)[1].split(',')[0]},inc.wages,12.3.4\r\n`;
    const body = await rejected({ returns: b.files.returns!, line_items: text('line_items.csv', lines), statements: b.files.statements! });
    expect(body.errors).toEqual([expect.objectContaining({ file: 'line_items.csv', row: b.counts.lineItems + 2, column: 'amount' })]);
  });

  it('caps the listed errors and says how many more there are', async () => {
    const rows = [LINES_HEADER, 'R-1,tot.income,50799.50', 'R-2,tot.income,41000.00'];
    for (let i = 0; i < 1200; i++) rows.push(`R-1,exp.business.other,${i}.999`);
    const body = await rejected({ returns: text('returns.csv', goodReturns), line_items: text('line_items.csv', csv(rows)) });
    expect(body.errorCount).toBe(1200);
    expect(body.errors).toHaveLength(1001);
    expect(body.errors[1000]).toMatchObject({ row: null, message: expect.stringMatching(/^…and 200 more errors not listed/) });
  });

  it('refuses an empty file and a file with only a header', async () => {
    const empty = await rejected({ returns: text('returns.csv', ''), line_items: text('line_items.csv', goodLines) });
    expect(empty.errors).toEqual([{ file: 'returns.csv', row: null, column: null, message: expect.stringMatching(/^The file is empty \(0 bytes\)/) }]);
    expect(empty.batchId).toBeNull();
    const headerOnly = await rejected({ returns: text('returns.csv', csv([RETURNS_HEADER])), line_items: text('line_items.csv', goodLines) });
    expect(headerOnly.errors.map((e) => e.message)).toContain('The returns table has a header but no rows; it needs one row per return.');
  });

  it('refuses files of the wrong type with what to do instead', async () => {
    const pdf = await rejected({ file: text('batch.pdf', '%PDF-1.7\n%binary') });
    expect(pdf.errors[0].message).toMatch(/not an XLSX workbook \(it is a PDF\)/);
    const xls = await rejected({ file: text('batch.xls', Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1, 0, 0])) });
    expect(xls.errors[0].message).toMatch(/old Excel 97–2003 workbook \(\.xls\)\. .* save it as an Excel Workbook \(\.xlsx\)/);
    const csvAsWorkbook = await rejected({ file: text('batch.xlsx', goodReturns) });
    expect(csvAsWorkbook.errors[0].message).toMatch(/text file, not an XLSX workbook/);
    const xlsxAsCsv = await rejected({ returns: text('returns.csv', await workbook({ returns: [['a']] })), line_items: text('line_items.csv', goodLines) });
    expect(xlsxAsCsv.errors[0].message).toMatch(/is an XLSX workbook .* not a CSV file/);
    const both = await rejected({ file: text('b.xlsx', 'x'), returns: text('returns.csv', goodReturns) });
    expect(both.errors[0].message).toMatch(/not both/);
    const unexpected = await rejected({
      returns: text('returns.csv', goodReturns),
      line_items: text('line_items.csv', goodLines),
      lines: text('x.csv', 'x'),
    } as never);
    expect(unexpected.errors[0].message).toMatch(/Unexpected upload part "lines"/);
    const missing = await rejected({ returns: text('returns.csv', goodReturns) });
    expect(missing.errors[0].message).toMatch(/The CSV file "line_items" is missing/);
    const none = await rejected({});
    expect(none.errors[0].message).toMatch(/No file was sent/);
  });

  it('refuses a workbook without the required sheets, naming the sheets it has', async () => {
    const body = await rejected({
      file: text('batch.xlsx', await workbook({ Sheet1: [['return_ref']], line_items: [[...LINES_HEADER.split(',')], ['R-1', 'inc.wages', 10]] })),
    });
    expect(body.errors.map((e) => e.message)).toContainEqual(
      expect.stringMatching(/The workbook has no sheet named "returns" \(its sheets: Sheet1, line_items\)/),
    );
  });

  it('takes formula cells by their saved value, never evaluating them; a formula without a value is an error', async () => {
    const header = RETURNS_HEADER.split(',');
    const sheets = (amount: unknown) => ({
      line_items: [[...LINES_HEADER.split(',')], ['F-1', 'inc.wages', amount], ['F-1', 'tot.income', { formula: 'C2', result: 1234.56 }]],
      returns: [header, ['F-1', { formula: '"0"&"12345678"', result: '012345678' }, 2024, 'Formula Person', 'none', '', '', '']],
    });
    // Stored before the returns sheet on purpose: the intake must wait for the returns.
    const ok = await upload(clerk, { file: text('formulas.xlsx', await workbook(sheets({ formula: '1000+234.56', result: 1234.56 }))) });
    expect(ok.status).toBe(201);
    const stored = await ctx.dataSource.query(
      `SELECT li.line_code, li.amount, t.tin FROM line_item li JOIN tax_return r ON r.id = li.return_id JOIN taxpayer t ON t.id = r.taxpayer_id WHERE r.batch_id = $1 ORDER BY li.line_no`,
      [ok.body.id],
    );
    expect(stored).toEqual([
      { line_code: 'inc.wages', amount: '1234.56', tin: '012345678' },
      { line_code: 'tot.income', amount: '1234.56', tin: '012345678' },
    ]);

    const noValue = await rejected({ file: text('formulas2.xlsx', await workbook(sheets({ formula: 'SUM(Z1:Z9)' }))) });
    expect(noValue.errors).toEqual([
      expect.objectContaining({
        row: 2,
        column: 'amount',
        message: expect.stringMatching(/holds a formula with no saved value \(Plumbline never calculates formulas\)/),
      }),
    ]);
  });

  it('refuses a CSV that is not UTF-8, naming the line', async () => {
    const latin1 = Buffer.concat([Buffer.from(`${RETURNS_HEADER}\nR-1,012345678,2024,Ren`), Buffer.from([0xe9]), Buffer.from(' Quill,none,,,\n')]);
    const body = await rejected({ returns: text('returns.csv', latin1), line_items: text('line_items.csv', goodLines) });
    expect(body.errors[0]).toMatchObject({
      file: 'returns.csv',
      row: 2,
      message: expect.stringMatching(/not UTF-8 text .* line 2\)\. In Excel choose "Save as… CSV UTF-8/),
    });
  });

  it('refuses a CSV with an unclosed quote', async () => {
    const body = await rejected({
      returns: text('returns.csv', goodReturns),
      line_items: text('line_items.csv', `${LINES_HEADER}\nR-1,"inc.wages,10\nR-2,tot.income,1\n`),
    });
    expect(body.errors[0].message).toMatch(/The CSV cannot be read past line \d+: a quoted value is opened and never closed/);
  });

  it('refuses a header with missing or unknown columns', async () => {
    const body = await rejected({
      returns: text('returns.csv', csv(['return_ref,tin,year,taxpayer_name,activity_code,preparer_id', 'R-1,012345678,2024,X,none,'])),
      line_items: text('line_items.csv', goodLines),
    });
    expect(body.errors.map((e) => e.message)).toEqual([
      expect.stringMatching(/^Unknown column "year"\. The returns table has the columns return_ref, tin, tax_year/),
      expect.stringMatching(/^The header row lacks the column tax_year\./),
    ]);
  });

  it('refuses a return without line items', async () => {
    const body = await rejected({ returns: text('returns.csv', goodReturns), line_items: text('line_items.csv', csv([LINES_HEADER, 'R-1,tot.income,1.00'])) });
    expect(body.errors).toEqual([expect.objectContaining({ row: 3, column: 'return_ref', message: expect.stringMatching(/^Return R-2 has no line items/) })]);
  });
});

describe('batches API: limits', () => {
  let ctx: TestContext;
  let clerk: SignedIn;

  beforeAll(async () => {
    ctx = await createTestContext({ BATCH_MAX_FILE_MB: '0.01', BATCH_MAX_ROWS: '5' });
    clerk = await signIn(ctx, 'clerk');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('answers a file over the size limit with 413 and stores nothing', async () => {
    const before = await countIntakeRows(ctx.dataSource);
    const big = `${LINES_HEADER}\n${'R-1,inc.wages,1.00\n'.repeat(1000)}`;
    const res = await upload(clerk, { returns: text('returns.csv', goodReturns), line_items: text('line_items.csv', big) });
    expect(res.status).toBe(413);
    expect(res.body.errors[0]).toMatchObject({
      file: 'line_items.csv',
      message: 'The file is larger than the 10 kB a batch file may be. Split the batch into smaller batches.',
    });
    expect(await countIntakeRows(ctx.dataSource)).toEqual(before);
  });

  it('refuses a table with more rows than the limit', async () => {
    const before = await countIntakeRows(ctx.dataSource);
    const rows = [LINES_HEADER];
    for (let i = 0; i < 7; i++) rows.push(`R-1,exp.business.other,${i + 1}.00`);
    const res = await upload(clerk, { returns: text('returns.csv', goodReturns), line_items: text('line_items.csv', csv(rows)) });
    expect(res.status).toBe(422);
    expect(res.body.errors).toContainEqual(
      expect.objectContaining({
        file: 'line_items.csv',
        row: 7,
        message: 'The line_items table has more than 5 rows, the most one batch file may hold. Split it into several batches.',
      }),
    );
    expect(await countIntakeRows(ctx.dataSource)).toEqual(before);
  });

  it('still rejects when nobody is signed in, before reading the upload', async () => {
    const res = await request(ctx.app).post('/api/batches').attach('returns', Buffer.from(goodReturns), 'returns.csv');
    expect(res.status).toBe(401);
  });
});

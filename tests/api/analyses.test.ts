import ExcelJS from 'exceljs';
import { digitProfileSchema } from '../../shared/digits';
import { signIn, type SignedIn } from '../helpers/auth';
import { createTestContext, type TestContext } from '../helpers/test-app';

/** F(1..n) as decimal strings (BigInt; math fact: Fibonacci leading digits follow Benford). */
function fibonacci(n: number): string[] {
  const out: string[] = [];
  let a = 1n;
  let b = 1n;
  for (let i = 0; i < n; i++) {
    out.push(a.toString());
    [a, b] = [b, a + b];
  }
  return out;
}

describe('POST /api/analyses/digits', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('profiles JSON amounts in the documented shape', async () => {
    // F1..F60 stay below 10^13 (the amount limit). First digits of F1..F60, counted by hand
    // from the sequence (math fact; OEIS A008963 lists them): 1 → 18 of 60.
    const amounts = fibonacci(60);
    const res = await examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).send({ amounts });
    expect(res.status).toBe(200);
    const p = digitProfileSchema.parse(res.body);
    expect(p.count).toBe(60);
    const ones = amounts.filter((a) => a[0] === '1').length;
    expect(p.firstDigit.counts[0]).toBe(ones);
    expect(p.firstDigit.counts.reduce((s, c) => s + c, 0)).toBe(60);
    expect(p.sizeAware.verdict).toBe('within_expected');
  });

  it('names every value that is not an amount, with its position', async () => {
    const res = await examiner.agent
      .post('/api/analyses/digits')
      .set('X-CSRF-Token', examiner.csrf)
      .send({ amounts: ['12.50', '12,5', 7, '1.5e-3', 'abc', '1e21'] });
    expect(res.status).toBe(422);
    expect(res.body.errors.map((e: { index: number }) => e.index)).toEqual([1, 3, 4]);
    expect(res.body.errors[0].message).toMatch(/12,5/);
  });

  it('refuses an empty list with the reason', async () => {
    const res = await examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).send({ amounts: [] });
    expect(res.status).toBe(422);
    expect(res.body.issues[0].message).toBe('Send at least one amount');
  });

  it('profiles a CSV column and an XLSX column uploaded as a file', async () => {
    const csv = 'payee,amount\nA,123.45\nB,2200\nC,31.00\nD,-45.10\n';
    const res = await examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).attach('file', Buffer.from(csv), 'spend.csv');
    expect(res.status).toBe(200);
    expect(res.body.count).toBe(4);
    expect(res.body.firstDigit.counts.slice(0, 4)).toEqual([1, 1, 1, 1]);

    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet('amounts');
    ws.addRow(['ref', 'value']);
    [512, 64.5, 8000, 9.99].forEach((v, i) => ws.addRow([`r${i}`, v]));
    const buf = Buffer.from(await wb.xlsx.writeBuffer());
    const x = await examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).field('column', 'value').attach('file', buf, 'book.xlsx');
    expect(x.status).toBe(200);
    expect(x.body.count).toBe(4);
    expect(x.body.firstDigit.counts[4]).toBe(1); // 512 → 5
  });

  it('explains a file whose column is missing or whose type is wrong', async () => {
    const res = await examiner.agent
      .post('/api/analyses/digits')
      .set('X-CSRF-Token', examiner.csrf)
      .field('column', 'total')
      .attach('file', Buffer.from('a,b\n1,2\n'), 'x.csv');
    expect(res.status).toBe(422);
    expect(res.body.error).toMatch(/no column "total"/);
    const pdf = await examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).attach('file', Buffer.from('%PDF-1.4'), 'x.pdf');
    expect(pdf.status).toBe(422);
    expect(pdf.body.error).toMatch(/not a \.txt, \.csv or \.xlsx/);
  });
});

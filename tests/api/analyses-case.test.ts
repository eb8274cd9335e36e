/**
 * Working papers kept with the case (issue 15): a reply carrying a CSV ledger arrives through
 * the public reply route; the examiner saves its digit analysis to the case; the stored counts
 * equal those of the same column through the CLI (`npm run digits -- --json`); the list is
 * logged; the PDF working paper reads back with pdftotext (poppler-utils) holding the file's
 * SHA-256 (node:crypto) and the caution; the database refuses to change a saved analysis.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Client } from 'pg';
import request from 'supertest';
import { ReconciliationSchema, SavedAnalysisListSchema, SavedAnalysisSchema } from '../../shared/analyses';
import { digitResultSchema } from '../../shared/digits';
import { signIn, type SignedIn } from '../helpers/auth';
import { caseInReview, dueIn, uniqueAddress } from '../helpers/letter-cases';
import { waitForMail } from '../helpers/maildev';
import { loadScoredBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { bufferBody } from '../helpers/download';

jest.setTimeout(180_000);

const ROOT = path.resolve(__dirname, '../..');

/** An invented ledger: 300 rows over three accounts, amounts spread over five decades. */
const LEDGER = `date,account,amount\n${Array.from({ length: 300 }, (_, i) => {
  const amount = (Math.round(10 ** (1 + ((i * 37) % 300) / 60) * 100) / 100).toFixed(2);
  return `2025-${String((i % 12) + 1).padStart(2, '0')}-15,${['stock', 'wages', 'rent'][i % 3]},${amount}`;
}).join('\n')}\n`;

describe('case analyses (working papers)', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  let caseId: string;
  let uploadId: string;
  let pdfUploadId: string;
  let token: string;

  beforeAll(async () => {
    ctx = await createTestContext();
    await loadScoredBatch(ctx.dataSource, { seed: 'analyses-case', returns: 200, plantShare: 0.1 });
    examiner = await signIn(ctx, 'examiner');
    ({ caseId } = await caseInReview(ctx.dataSource, examiner));
    const to = uniqueAddress();
    const sent = await examiner.agent
      .post(`/api/cases/${caseId}/document-requests`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ items: ['The ledger of 2025 as a spreadsheet'], dueDate: dueIn(21), email: to });
    expect(sent.status).toBe(201);
    const mail = await waitForMail(to);
    token = /\/reply\/([A-Za-z0-9_-]{43})/.exec(mail.text ?? '')![1];
    // The taxpayer's reply through the public route: the ledger as CSV and a PDF beside it.
    const reply = await request(ctx.app)
      .post(`/api/replies/${token}`)
      .attach('files', Buffer.from(LEDGER), { filename: 'ledger-2025.csv', contentType: 'text/csv' })
      .attach('files', Buffer.from('%PDF-1.4\n%%EOF\n'), { filename: 'note.pdf', contentType: 'application/pdf' });
    expect(reply.status).toBeLessThan(300);
    const rows = await ctx.dataSource.query(
      `SELECT u.id, u.content_type FROM reply_upload u JOIN document_request d ON d.id = u.document_request_id WHERE d.case_id = $1`,
      [caseId],
    );
    uploadId = rows.find((r: { content_type: string }) => r.content_type === 'text/csv').id;
    pdfUploadId = rows.find((r: { content_type: string }) => r.content_type === 'application/pdf').id;
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('saves the digit analysis of the ledger column; its counts equal the CLI on the same file', async () => {
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/analyses`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { uploadId }, column: 'amount', by: 'account' });
    expect(res.status).toBe(201);
    const saved = SavedAnalysisSchema.parse(res.body);
    expect(saved.sha256).toBe(createHash('sha256').update(LEDGER).digest('hex'));
    expect(saved.fileName).toBe('ledger-2025.csv');

    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-analyses-case-'));
    try {
      const file = path.join(dir, 'ledger-2025.csv');
      fs.writeFileSync(file, LEDGER);
      const cli = spawnSync(
        path.join(ROOT, 'node_modules/.bin/tsx'),
        [path.join(ROOT, 'scripts/digits.ts'), file, '--column', 'amount', '--by', 'account', '--json'],
        {
          cwd: ROOT,
          encoding: 'utf8',
          timeout: 120_000,
        },
      );
      expect(cli.status).toBe(0);
      const fromCli = digitResultSchema.parse(JSON.parse(cli.stdout));
      for (const t of ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'] as const) {
        expect(saved.result[t].counts).toEqual(fromCli[t].counts);
        expect(saved.result[t].mad).toBe(fromCli[t].mad);
        expect(saved.result[t].chiSquare).toBe(fromCli[t].chiSquare);
      }
      expect(saved.result.split).toEqual(fromCli.split);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }

    const list = await examiner.agent.get(`/api/cases/${caseId}/analyses`);
    expect(list.status).toBe(200);
    expect(SavedAnalysisListSchema.parse(list.body).analyses.map((a) => a.id)).toEqual([saved.id]);
    const log = await ctx.dataSource.query(`SELECT action, detail FROM access_log WHERE record_id = $1 AND detail LIKE '%digit analys%' ORDER BY id`, [caseId]);
    expect(log.map((l: { action: string }) => l.action)).toEqual(['change', 'view']);

    const pdf = await examiner.agent.get(`/api/cases/${caseId}/analyses/${saved.id}/pdf`).buffer(true).parse(bufferBody);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    const text = execFileSync('pdftotext', ['-layout', '-', '-'], { input: pdf.body as Buffer, encoding: 'utf8' });
    expect(text).toContain(saved.sha256!);
    expect(text).toContain('ledger-2025.csv');
    expect(text.replace(/\s+/g, ' ')).toContain('selects figures for a closer look; it is not a finding');
  });

  it('the database refuses to change or remove a saved analysis', async () => {
    const owner = new Client({ connectionString: ctx.db.ownerUrl });
    await owner.connect();
    try {
      await expect(owner.query(`UPDATE case_analysis SET what = 'x'`)).rejects.toThrow(/immutable/);
      await expect(owner.query(`DELETE FROM case_analysis`)).rejects.toThrow(/immutable/);
    } finally {
      await owner.end();
    }
  });

  it('a PDF reply file is a document, not figures: 422 with the reason; an unknown file 404', async () => {
    const pdf = await examiner.agent
      .post(`/api/cases/${caseId}/analyses`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { uploadId: pdfUploadId }, column: 'amount' });
    expect(pdf.status).toBe(422);
    expect(pdf.body.error).toMatch(/note\.pdf" is a document, not a table of figures/);
    const none = await examiner.agent
      .post(`/api/cases/${caseId}/analyses`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { uploadId: '00000000-0000-4000-8000-000000000000' }, column: 'amount' });
    expect(none.status).toBe(404);
    const col = await examiner.agent.post(`/api/cases/${caseId}/analyses`).set('X-CSRF-Token', examiner.csrf).send({ source: { uploadId }, column: 'total' });
    expect(col.status).toBe(422);
    expect(col.body.error).toMatch(/no column "total"/);
  });

  it('reconciles a ledger with the return: a known difference per mapped line code', async () => {
    // The return's own amounts per line code, read from the database (the fixture's truth).
    const lines: { line_code: string; total: string }[] = await ctx.dataSource.query(
      `SELECT l.line_code, sum(l.amount)::text AS total FROM exam_case c JOIN line_item l ON l.return_id = c.return_id WHERE c.id = $1 GROUP BY l.line_code ORDER BY l.line_code`,
      [caseId],
    );
    expect(lines.length).toBeGreaterThanOrEqual(2);
    const [a, b] = lines;
    const cents = (t: string) => Math.round(Number(t) * 100);
    const money = (c: number) => (c / 100).toFixed(2);
    // Line a: two categories that add up to the reported amount plus 123.45; line b: exactly
    // the reported amount; one category left unmapped.
    const aTotal = cents(a.total) + 12345;
    const aFirst = Math.floor(aTotal / 3);
    const csv = `category,amount\nsales-north,${money(aFirst)}\nsales-south,${money(aTotal - aFirst)}\nfuel,${b.total}\nsundry,40.00\n`;
    const sent = await request(ctx.app)
      .post(`/api/replies/${token}`)
      .attach('files', Buffer.from(csv), { filename: 'ledger-by-category.csv', contentType: 'text/csv' });
    expect(sent.status).toBeLessThan(300);
    const rows = await ctx.dataSource.query(
      `SELECT u.id FROM reply_upload u JOIN document_request d ON d.id = u.document_request_id WHERE d.case_id = $1 AND u.file_name = 'ledger-by-category.csv'`,
      [caseId],
    );
    const res = await examiner.agent
      .post(`/api/cases/${caseId}/reconciliation`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({
        source: { uploadId: rows[0].id },
        column: 'amount',
        by: 'category',
        mapping: { 'sales-north': a.line_code, 'sales-south': a.line_code, fuel: b.line_code },
      });
    expect(res.status).toBe(200);
    const r = ReconciliationSchema.parse(res.body);
    const byCode = Object.fromEntries(r.rows.map((x) => [x.lineCode, x]));
    expect(byCode[a.line_code]).toMatchObject({
      categories: ['sales-north', 'sales-south'],
      ledgerTotal: money(aTotal),
      reported: money(cents(a.total)),
      difference: '123.45',
    });
    expect(byCode[b.line_code]).toMatchObject({ categories: ['fuel'], difference: '0.00' });
    expect(r.unmapped).toEqual([{ category: 'sundry', total: '40.00' }]);

    const bad = await examiner.agent
      .post(`/api/cases/${caseId}/reconciliation`)
      .set('X-CSRF-Token', examiner.csrf)
      .send({ source: { uploadId: rows[0].id }, column: 'amount', by: 'category', mapping: { rent: a.line_code } });
    expect(bad.status).toBe(422);
    expect(bad.body.error).toMatch(/no category "rent"/);
  });
});

/**
 * Test fixture: a generated Aldermere batch written straight into the database (plain
 * INSERTs, not the upload path, so scoring and case tests do not depend on intake), then
 * optionally scored in-process by the same service the worker runs.
 */
import { randomBytes } from 'node:crypto';
import type { DataSource } from 'typeorm';
import { generate, type GeneratedBatch, type GenerateOptions } from '../../shared/demo/aldermere';
import { computeTotals, type LineCode } from '../../shared/returns/line-codes';
import { centsFromDecimal, formatCents } from '../../shared/returns/money';
import { uuid7Factory } from '../../server/batches/intake/uuid7';
import { ensureYearPartitions } from '../../server/returns/year-partitions.repository';
import { scoreBatchNow } from '../../server/scoring/scoring.service';

const uuid7 = uuid7Factory();

/** A loaded batch: its id, the generated rows and the return id of each return_ref. */
export interface LoadedBatch {
  batchId: string;
  generated: GeneratedBatch;
  returnIdOf: Map<string, string>;
}

/** Writes a generated batch as state 'queued' (as intake leaves it). */
export async function loadGeneratedBatch(ds: DataSource, opts: GenerateOptions): Promise<LoadedBatch> {
  const g = generate(opts);
  const batchId: string = (
    await ds.query(
      `INSERT INTO filing_batch (file_hash, format, file_names, state, return_count, line_item_count, statement_count) VALUES ($1, 'csv', $2, 'queued', $3, $4, $5) RETURNING id`,
      [randomBytes(32).toString('hex'), ['fixture.csv'], g.returns.length, g.lineItems.length, g.statements.length],
    )
  )[0].id;
  // taxpayers and preparers (upsert: a second batch may name the same ones)
  const tins = new Map<string, { name: string; activity: string; email: string }>();
  for (const r of g.returns) tins.set(r.tin, { name: r.taxpayer_name, activity: r.activity_code, email: r.email });
  await ds.query(
    `INSERT INTO taxpayer (tin, name, activity_code, email) SELECT * FROM unnest($1::char(9)[], $2::text[], $3::text[], $4::text[]) ON CONFLICT (tin) DO NOTHING`,
    [[...tins.keys()], [...tins.values()].map((t) => t.name), [...tins.values()].map((t) => t.activity), [...tins.values()].map((t) => t.email || null)],
  );
  const preparers = [...new Set(g.returns.map((r) => r.preparer_id).filter(Boolean))];
  await ds.query(`INSERT INTO preparer (code) SELECT unnest($1::text[]) ON CONFLICT (code) DO NOTHING`, [preparers]);
  const tpId = new Map<string, string>(
    (await ds.query(`SELECT id, tin FROM taxpayer WHERE tin = ANY($1::char(9)[])`, [[...tins.keys()]])).map((r: { id: string; tin: string }) => [
      String(r.tin),
      r.id,
    ]),
  );
  const prId = new Map<string, string>(
    (await ds.query(`SELECT id, code FROM preparer WHERE code = ANY($1::text[])`, [preparers])).map((r: { id: string; code: string }) => [r.code, r.id]),
  );

  const linesByRef = new Map<string, { code: LineCode; cents: number }[]>();
  for (const l of g.lineItems) {
    const list = linesByRef.get(l.return_ref) ?? [];
    list.push({ code: l.line_code as LineCode, cents: centsFromDecimal(l.amount) });
    linesByRef.set(l.return_ref, list);
  }
  const returnIdOf = new Map<string, string>();
  const cols: unknown[][] = Array.from({ length: 16 }, () => []);
  g.returns.forEach((r, i) => {
    const id = uuid7();
    returnIdOf.set(r.return_ref, id);
    const t = computeTotals(linesByRef.get(r.return_ref) ?? []);
    const m = (c: number | null) => (c === null ? null : formatCents(c));
    [
      id,
      tpId.get(r.tin),
      r.preparer_id ? prId.get(r.preparer_id) : null,
      r.return_ref,
      Number(r.tax_year),
      i + 2,
      (linesByRef.get(r.return_ref) ?? []).length,
      m(t.reported.income),
      m(t.reported.deductions),
      m(t.reported.refund),
      m(t.wages),
      m(t.interest),
      m(t.receipts),
      m(t.businessExpenses),
      m(t.income),
      m(t.deductions),
    ].forEach((v, k) => cols[k].push(v));
  });
  await ds.query(
    `INSERT INTO tax_return (id, batch_id, taxpayer_id, preparer_id, return_ref, tax_year, source_row, line_count, reported_income, reported_deductions, reported_refund,
                             total_wages, total_interest, total_receipts, total_business_expenses, computed_income, computed_deductions)
     SELECT u.id, $1, u.tp, u.pr, u.ref, u.yr, u.row, u.lc, u.ri, u.rd, u.rr, u.w, u.i, u.rc, u.ex, u.ci, u.cd
       FROM unnest($2::uuid[], $3::uuid[], $4::uuid[], $5::text[], $6::smallint[], $7::int[], $8::int[], $9::numeric[], $10::numeric[], $11::numeric[],
                   $12::numeric[], $13::numeric[], $14::numeric[], $15::numeric[], $16::numeric[], $17::numeric[])
            AS u(id, tp, pr, ref, yr, row, lc, ri, rd, rr, w, i, rc, ex, ci, cd)`,
    [batchId, ...cols],
  );
  // As intake does: the years' partitions first, and each line with its return's year.
  await ensureYearPartitions(
    ds,
    g.returns.map((r) => Number(r.tax_year)),
  );
  const yearOf = new Map(g.returns.map((r) => [r.return_ref, Number(r.tax_year)]));
  const li: [string[], number[], string[], string[], number[]] = [[], [], [], [], []];
  const lineNo = new Map<string, number>();
  for (const l of g.lineItems) {
    const id = returnIdOf.get(l.return_ref)!;
    const n = (lineNo.get(id) ?? 0) + 1;
    lineNo.set(id, n);
    li[0].push(id);
    li[1].push(n);
    li[2].push(l.line_code);
    li[3].push(l.amount);
    li[4].push(yearOf.get(l.return_ref)!);
  }
  await ds.query(
    `INSERT INTO line_item (return_id, line_no, line_code, amount, tax_year) SELECT * FROM unnest($1::uuid[], $2::smallint[], $3::text[], $4::numeric[], $5::smallint[])`,
    li,
  );
  if (g.statements.length) {
    await ds.query(
      `INSERT INTO third_party_statement (batch_id, tin, tax_year, kind, payer, amount, source_row) SELECT $1, * FROM unnest($2::char(9)[], $3::smallint[], $4::text[], $5::text[], $6::numeric[], $7::int[])`,
      [
        batchId,
        g.statements.map((s) => s.tin),
        g.statements.map((s) => Number(s.tax_year)),
        g.statements.map((s) => s.kind),
        g.statements.map((s) => s.payer),
        g.statements.map((s) => s.amount),
        g.statements.map((_, i) => i + 2),
      ],
    );
  }
  return { batchId, generated: g, returnIdOf };
}

/** Loads and scores a generated batch in-process; cases are opened as the worker would. */
export async function loadScoredBatch(ds: DataSource, opts: GenerateOptions): Promise<LoadedBatch> {
  const b = await loadGeneratedBatch(ds, opts);
  await scoreBatchNow(ds, b.batchId);
  return b;
}

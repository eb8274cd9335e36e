import { DEMO_YEARS, generate, generateReturns, PLANT_KINDS, type GeneratedReturn, type PlantKind } from '../../../shared/demo/aldermere';
import { createRng } from '../../../shared/demo/prng';
import { LineItemRowSchema, returnRowSchema, statementRowSchema } from '../../../shared/returns/batch-rows';
import { computeTotals, type LineCode } from '../../../shared/returns/line-codes';
import { centsFromDecimal } from '../../../shared/returns/money';

const years = { first: 2016, last: 2025 };
const batch = generate({ seed: 'unit', returns: 4000, plantShare: 0.06 });
const planted = new Set(batch.labels.map((l) => l.returnRef));
const linesOf = new Map<string, { code: LineCode; cents: number }[]>();
for (const l of batch.lineItems) {
  const list = linesOf.get(l.return_ref) ?? [];
  list.push({ code: l.line_code as LineCode, cents: centsFromDecimal(l.amount) });
  linesOf.set(l.return_ref, list);
}

describe('the seeded PRNG', () => {
  it('repeats for the same seed and differs for another', () => {
    const a = createRng(7);
    const b = createRng(7);
    const c = createRng(8);
    const xs = Array.from({ length: 5 }, () => a.next());
    expect(Array.from({ length: 5 }, () => b.next())).toEqual(xs);
    expect(Array.from({ length: 5 }, () => c.next())).not.toEqual(xs);
  });

  it('draws normals with mean 0 and sd 1', () => {
    const r = createRng('normal');
    const xs = Array.from({ length: 20_000 }, () => r.normal());
    const mean = xs.reduce((s, x) => s + x, 0) / xs.length;
    const sd = Math.sqrt(xs.reduce((s, x) => s + (x - mean) ** 2, 0) / xs.length);
    expect(Math.abs(mean)).toBeLessThan(0.03);
    expect(Math.abs(sd - 1)).toBeLessThan(0.03);
  });
});

describe('the Aldermere generator', () => {
  it('is repeatable: the same seed gives the same batch', () => {
    const again = generate({ seed: 'unit', returns: 4000, plantShare: 0.06 });
    expect(again.lineItems.length).toBe(batch.lineItems.length);
    expect(again.returns.slice(0, 50)).toEqual(batch.returns.slice(0, 50));
    expect(again.labels).toEqual(batch.labels);
  });

  it('makes the requested number of returns over the scenario years, each taxpayer filing every year', () => {
    expect(batch.returns).toHaveLength(4000);
    expect(new Set(batch.returns.map((r) => r.tax_year))).toEqual(new Set(DEMO_YEARS.map(String)));
    expect(new Set(batch.returns.map((r) => r.tin)).size).toBe(1000);
    expect(new Set(batch.returns.map((r) => r.return_ref)).size).toBe(4000);
    const perReturn = batch.lineItems.length / batch.returns.length;
    expect(perReturn).toBeGreaterThan(15);
    expect(perReturn).toBeLessThan(60);
  });

  it('writes only rows the intake accepts', () => {
    const rs = returnRowSchema(years);
    const ss = statementRowSchema(years);
    for (const r of batch.returns) expect(rs.safeParse(r).success).toBe(true);
    for (const l of batch.lineItems) if (!LineItemRowSchema.safeParse(l).success) throw new Error(JSON.stringify(l));
    for (const s of batch.statements) expect(ss.safeParse(s).success).toBe(true);
  });

  it('plants about the requested share, labels each plant with known kinds, and never writes labels into the batch', () => {
    const share = batch.labels.length / batch.returns.length;
    expect(share).toBeGreaterThan(0.04);
    expect(share).toBeLessThan(0.08);
    const kinds = new Set<PlantKind>(batch.labels.flatMap((l) => l.kinds));
    for (const k of kinds) expect(Object.keys(PLANT_KINDS)).toContain(k);
    expect(kinds.size).toBeGreaterThanOrEqual(8);
    for (const l of batch.labels) expect(l.detail.length).toBeGreaterThan(10);
    const columns = new Set(Object.keys(batch.returns[0]));
    expect(columns).toEqual(new Set(['return_ref', 'tin', 'tax_year', 'taxpayer_name', 'activity_code', 'preparer_id', 'email', 'postal_address']));
    // The mill: one preparer all of whose returns are planted.
    const mill = batch.labels.find((l) => l.kinds.includes('preparer_mill'))!.preparerId;
    const millReturns = batch.returns.filter((r) => r.preparer_id === mill);
    expect(millReturns.length).toBeGreaterThan(8);
    for (const r of millReturns) expect(planted.has(r.return_ref)).toBe(true);
  });

  it('makes typical returns that add up by the rules and match their statements', () => {
    const statementsOf = new Map<string, number>();
    for (const s of batch.statements) {
      if (s.kind === 'sales') continue;
      const k = `${s.tin}:${s.tax_year}:${s.kind}`;
      statementsOf.set(k, (statementsOf.get(k) ?? 0) + centsFromDecimal(s.amount));
    }
    for (const r of batch.returns) {
      if (planted.has(r.return_ref)) continue;
      const t = computeTotals(linesOf.get(r.return_ref)!);
      expect(t.reported.income).toBe(t.income);
      expect(t.reported.refund ?? 0).toBe(t.refund);
      for (const kind of ['wages', 'interest'] as const) {
        const reported = kind === 'wages' ? t.wages : t.interest;
        expect(reported).toBeGreaterThanOrEqual(statementsOf.get(`${r.tin}:${r.tax_year}:${kind}`) ?? 0);
      }
    }
  });

  it('breaks the rules where it says so', () => {
    for (const l of batch.labels) {
      const t = computeTotals(linesOf.get(l.returnRef)!);
      if (l.kinds.includes('totals_mismatch')) expect(t.reported.income).toBeLessThan(t.income);
      if (l.kinds.includes('refund_inflated')) expect(t.reported.refund!).toBeGreaterThan(t.refund);
      if (l.kinds.includes('expenses_exceed_receipts')) expect(t.businessExpenses).toBeGreaterThanOrEqual(Math.round(t.receipts * 0.9));
    }
  });

  it('gives typical itemised amounts first digits close to Benford, and invented ones far from it', () => {
    const mad = (amounts: string[]) => {
      const counts = new Array(10).fill(0);
      let n = 0;
      for (const a of amounts) {
        const d = a.replace(/^[-0.]+/, '')[0];
        if (!d) continue;
        counts[Number(d)]++;
        n++;
      }
      let sum = 0;
      for (let d = 1; d <= 9; d++) sum += Math.abs(counts[d] / n - Math.log10(1 + 1 / d));
      return sum / 9;
    };
    const itemised = (l: { line_code: string }) => /^(exp|ded)\./.test(l.line_code);
    const honest = batch.lineItems.filter((l) => itemised(l) && !planted.has(l.return_ref)).map((l) => l.amount);
    const inventedRefs = new Set(batch.labels.filter((l) => l.kinds.includes('invented_digits')).map((l) => l.returnRef));
    const invented = batch.lineItems.filter((l) => itemised(l) && inventedRefs.has(l.return_ref)).map((l) => l.amount);
    expect(honest.length).toBeGreaterThan(20_000);
    expect(mad(honest)).toBeLessThan(0.006); // Nigrini's "close conformity" line
    expect(mad(invented)).toBeGreaterThan(0.015); // past "nonconformity"
  });

  it('streams the same returns that generate() collects', () => {
    const first = generateReturns({ seed: 'unit', returns: 4000, plantShare: 0.06 }).next().value as GeneratedReturn;
    expect(first.ret).toEqual(batch.returns[0]);
    expect(first.lines.map((l) => l.amount)).toEqual(batch.lineItems.slice(0, first.lines.length).map((l) => l.amount));
  });
});
